"""How a standardization result reads on the Standardize screen: the decision first, then
every replicate, the statistics, and the handling notes."""

from __future__ import annotations

from rich.text import Text

from carboy.model.forms.standardize import _brief, fmt_molar
from carboy.model.titration_stats import GRUBBS_MIN_N

OUTLIER_MARK = "◆ OUTLIER"
ACCEPTED_MARK = "✓ ACCEPTED"
REJECTED_MARK = "✗ NOT ACCEPTED"

GENERAL_CAUTION = (
    "⚠ Dry the standard as its notes say; cool it in a desiccator. Use CO2-free water. Keep "
    "NaOH and KOH closed or behind a soda-lime guard tube (they take up CO2 from air). "
    "Eye protection and gloves.")
"""Common practice; shown until a titrant and a standard are given."""


def rule_text(rule, origin: str = "") -> str:
    """``rule (default): RSD ≤ 0.2 %, ≥ 3 replicates, no outlier (Grubbs α 0.05)``."""
    where = {"storeroom": " (storeroom)", "default": " (default)"}.get(origin, "")
    return (f"rule{where}: RSD ≤ {rule.max_rsd_percent:g} %, ≥ {rule.min_replicates} "
            f"replicates, no outlier (Grubbs α {rule.alpha:g})")


def short_reasons(result) -> list[str]:
    """Why a result is not accepted, in a few words each (``RSD 0.410 % > 0.2 %``)."""
    rule = result.rule
    out = []
    if result.n < rule.min_replicates:
        out.append(f"only {result.n} replicate{'s' if result.n != 1 else ''} "
                   f"(the rule needs {rule.min_replicates})")
    if result.rsd_percent is not None and result.rsd_percent > rule.max_rsd_percent:
        out.append(f"RSD {result.rsd_percent:.3f} % > {rule.max_rsd_percent:g} %")
    out += [f"replicate {i} is an outlier" for i in result.outliers]
    if not out and result.reasons:
        out.append(result.reasons[0])
    return out


def replicate_rows(result) -> list[tuple[str, str, str, str, str]]:
    """(#, mass g, titre mL, molarity M, mark) per replicate."""
    return [(str(r.index), f"{r.mass_g:.4f}", f"{r.volume_ml:.2f}", fmt_molar(r.molar),
             OUTLIER_MARK if r.outlier else "") for r in result.replicates]


def result_text(result, *, rule_origin: str = "", stale: bool = False) -> Text:
    """The result panel: decision first, then every replicate, the statistics, advice."""
    t = Text()
    if stale:
        t.append("STALE: inputs changed; this is the last good result\n", style="bold italic")
    if result.accepted:
        t.append(ACCEPTED_MARK, style="bold reverse green")
    else:
        t.append(REJECTED_MARK, style="bold reverse red")
    t.append(f"  {fmt_molar(result.mean_molar)} M {result.titrant.key}\n", style="bold")
    for reason in short_reasons(result) if not result.accepted else ():
        t.append(f"  ✗ {reason}\n", style="bold")
    t.append(rule_text(result.rule, rule_origin) + "\n", style="dim")
    t.append(f"vs {result.standard.label}, assay {result.purity_percent:g} %"
             + (" (assumed)" if result.purity_defaulted else ""))
    blank = result.replicates[0].blank_ml if result.replicates else 0.0
    t.append(f", blank {blank:g} mL\n" if blank else "\n")
    rows = replicate_rows(result)
    head = ("#", "mass g", "titre mL", "molarity M")
    widths = [max(len(head[i]), *(len(r[i]) for r in rows)) for i in range(4)]
    t.append(" ".join(h.rjust(w) for h, w in zip(head, widths)) + "\n", style="bold")
    for row in rows:
        t.append(" ".join(c.rjust(w) for c, w in zip(row[:4], widths)))
        if row[4]:
            t.append(f" {row[4]}", style="bold reverse")
        t.append("\n")
    t.append("mean    ", style="bold")
    t.append(f"{fmt_molar(result.mean_molar)} M\n")
    if result.sd_molar is not None:
        t.append("sd      ", style="bold")
        t.append(f"{result.sd_molar:.2g} M\n")
        t.append("RSD     ", style="bold")
        t.append(f"{result.rsd_percent:.3f} %\n")
        t.append("95 % CI ", style="bold")
        t.append(f"± {result.ci95_molar:.2g} M (t {result.t_critical:.3f}, n {result.n})\n")
    test = result.outlier_test
    t.append("Grubbs  ", style="bold")
    if not test.get("applicable", test.get("statistic") is not None):
        t.append(f"not applied with n {result.n} (from {GRUBBS_MIN_N}): acceptance rests "
                 "on the RSD\n")
    else:
        flagged = (f"replicate {test['suspect']} flagged" if test.get("suspect")
                   else "none flagged")
        sign = ">" if test.get("suspect") else "≤"
        critical = test.get("critical", test.get("critical_value"))
        t.append(f"G {test['statistic']:.3f} {sign} {critical:.3f} "
                 f"(α {test['alpha']:g}): {flagged}\n")
    if result.deviation_percent is not None:
        t.append("nominal ", style="bold")
        t.append(f"{result.nominal_molar:g} M: mean {result.deviation_percent:+.2f} %\n")
    if result.reasons:
        t.append("Not accepted because\n", style="bold")
        for reason in result.reasons:
            t.append(f"✗ {reason}\n")
    if result.warnings:
        t.append("Warnings\n", style="bold")
        for warning in result.warnings:
            t.append(f"! {warning}\n")
    if result.notes:
        t.append("Notes (with sources)\n", style="bold")
        for note in result.notes:
            t.append(f"· {note}\n", style="dim")
    return t


def cautions_text(tit=None, std=None) -> str:
    """The notes line: the standard's drying, CO2-free water, the titrant's handling."""
    if tit is None or std is None:
        return GENERAL_CAUTION
    parts = [f"⚠ {std.label}: {_brief(std.drying[0].text)}." if std.drying else "⚠"]
    if tit.kind == "base":
        parts.append(f"Use CO2-free water. Keep {tit.key} closed or behind a soda-lime guard "
                     "tube (it takes up CO2 from air).")
    else:
        parts.append(f"Making up {tit.key}: acid into water, never water into acid.")
    parts.append("Eye protection and gloves.")
    return " ".join(parts)
