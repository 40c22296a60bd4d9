"""The shipped E-theta grid (``data/etheta_grid.npy``) is the grid the quadrature gives."""

from __future__ import annotations

import numpy as np

from carboy.model import etheta


def test_shipped_grid_is_the_computed_grid():
    shipped = etheta.shipped_grid()
    assert shipped is not None, "data/etheta_grid.npy is missing: python -m carboy.model.etheta"
    np.testing.assert_allclose(shipped, etheta.computed_grid(), rtol=1e-12, atol=1e-300)


def test_table_uses_the_shipped_grid_and_interpolates_the_integral():
    u0, u, j, dj, jp, djp = etheta._table()
    assert np.array_equal(j, etheta.shipped_grid()[0])
    x = np.array([1e-4, 0.37, 2.5, 41.0])
    direct_j, direct_jp, _ = etheta.j_integral(x)
    got_j, got_jp = etheta.j_function(x)
    np.testing.assert_allclose(got_j, direct_j, rtol=1e-8)
    np.testing.assert_allclose(got_jp, direct_jp, rtol=1e-8)


def test_a_grid_of_other_nodes_is_not_used(monkeypatch, tmp_path):
    wrong = tmp_path / "data"
    wrong.mkdir()
    np.save(wrong / etheta.GRID_FILE, np.zeros((4, 7)))

    monkeypatch.setattr(etheta, "package_file", lambda package, name: str(wrong / name))
    assert etheta.shipped_grid() is None


def test_a_missing_grid_file_is_not_used(monkeypatch, tmp_path):
    monkeypatch.setattr(etheta, "package_file", lambda package, name: str(tmp_path / name))
    assert etheta.shipped_grid() is None
