"""The solver makes no matrix products: BLAS would start threads for them, and on a busy
server those threads made the solver several times slower (issue: speed at the limit).
Its sums are weighted sums of rows instead (see ``carboy.model.solver.charge_balance``)."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

import carboy.model.etheta
import carboy.model.metal_complexes
import carboy.model.metal_data
import carboy.model.metal_salts
import carboy.model.metals
import carboy.model.molality
import carboy.model.pitzer
import carboy.model.pitzer_metals
import carboy.model.pitzer_scalar
import carboy.model.solver
import carboy.model.speciation
import carboy.model.speciation_models

SOLVER = sorted(Path(carboy.model.solver.__file__).parent.glob("*.py")) + [
    Path(m.__file__) for m in (carboy.model.speciation, carboy.model.metals,
                               carboy.model.metal_salts, carboy.model.metal_data,
                               carboy.model.metal_complexes, carboy.model.speciation_models,
                               carboy.model.pitzer, carboy.model.etheta,
                               carboy.model.molality, carboy.model.pitzer_scalar,
                               carboy.model.pitzer_metals)]
"""The solver's own modules, the metal terms it evaluates at every trial point, and the
specific-interaction model's."""
BLAS_CALLS = {"dot", "matmul", "tensordot", "inner", "vdot", "outer_product", "solve",
              "lstsq", "inv", "multi_dot"}


def _blas_uses(tree: ast.AST) -> list[str]:
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.BinOp) and isinstance(node.op, ast.MatMult):
            found.append(f"line {node.lineno}: the @ operator")
        if isinstance(node, ast.Call):
            name = getattr(node.func, "attr", getattr(node.func, "id", ""))
            if name in BLAS_CALLS:
                found.append(f"line {node.lineno}: {name}()")
            for kw in node.keywords:   # einsum(..., optimize=...) may call BLAS
                if kw.arg == "optimize":
                    found.append(f"line {node.lineno}: einsum with optimize")
    return found


@pytest.mark.parametrize("path", SOLVER, ids=lambda p: p.name)
def test_no_matrix_products(path):
    assert _blas_uses(ast.parse(path.read_text(encoding="utf-8"))) == []


def test_the_check_finds_a_matrix_product():
    assert _blas_uses(ast.parse("c = a @ b\nd = np.dot(a, b)\n"
                                "e = np.einsum('ij,jk', a, b, optimize=True)")) != []
