"""Row and column scaling of the general form, and the way back.

Blending LPs mix columns measured in %, MJ/kg, mg/kg and ppm, so their coefficients span
many orders of magnitude. Before solving we scale rows and columns by powers of two so that
the nonzeros of A sit near 1 (geometric-mean passes, then equilibration); powers of two make
the scaling itself exact in floating point. With scale factors R (rows) and C (columns):

    A_s = R A C,   c_s = C c,   x = C x_s,   row bounds_s = R row bounds,
    column bounds_s = column bounds / C,   y = R y_s,   d = d_s / C.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blendkit.engine.standard_form import StandardForm

# Geometric-mean passes over rows and columns; more rarely helps.
GEOMETRIC_PASSES = 6


@dataclass(frozen=True)
class Scaling:
    """The factors of a scaling: multiply rows by `rows`, columns by `cols`."""

    rows: np.ndarray
    cols: np.ndarray


def _power_of_two(factor: np.ndarray) -> np.ndarray:
    """The power of two nearest to each factor (in log scale)."""
    return np.exp2(np.round(np.log2(factor)))


def find_scaling(A: np.ndarray) -> Scaling:
    """Scale factors that bring the nonzeros of A near 1."""
    m, n = A.shape
    rows, cols = np.ones(m), np.ones(n)
    magnitude = np.abs(A)
    nonzero = magnitude > 0
    if not nonzero.any():
        return Scaling(rows, cols)
    logs = np.where(nonzero, np.log2(np.where(nonzero, magnitude, 1.0)), 0.0)
    log_r, log_c = np.zeros(m), np.zeros(n)
    for _ in range(GEOMETRIC_PASSES):
        scaled = np.where(nonzero, logs + log_r[:, None] + log_c[None, :], np.nan)
        with np.errstate(all="ignore"):
            row_mid = (np.nanmax(scaled, axis=1, initial=-np.inf) + np.nanmin(scaled, axis=1, initial=np.inf)) / 2
        log_r -= np.where(np.isfinite(row_mid), row_mid, 0.0)
        scaled = np.where(nonzero, logs + log_r[:, None] + log_c[None, :], np.nan)
        with np.errstate(all="ignore"):
            col_mid = (np.nanmax(scaled, axis=0, initial=-np.inf) + np.nanmin(scaled, axis=0, initial=np.inf)) / 2
        log_c -= np.where(np.isfinite(col_mid), col_mid, 0.0)
    # Equilibrate: the largest entry of each column becomes about 1.
    scaled = np.where(nonzero, logs + log_r[:, None] + log_c[None, :], -np.inf)
    col_max = scaled.max(axis=0)
    log_c -= np.where(np.isfinite(col_max), col_max, 0.0)
    return Scaling(rows=_power_of_two(np.exp2(log_r)), cols=_power_of_two(np.exp2(log_c)))


def scale_form(form: StandardForm, scaling: Scaling) -> StandardForm:
    """The scaled problem; see the module docstring."""
    R, C = scaling.rows, scaling.cols
    return StandardForm(
        c=form.c * C,
        A=form.A * R[:, None] * C[None, :],
        row_lower=form.row_lower * R,
        row_upper=form.row_upper * R,
        col_lower=form.col_lower / C,
        col_upper=form.col_upper / C,
        n_ub=form.n_ub,
        from_linprog=form.from_linprog,
    )
