"""Data reconciliation by VDI 2048 Part 1: weighted least squares under linear constraints.

Measured values x with covariance matrix S_x (full: correlated meters included) and linear
constraints F·x = c. The reconciled values x̂ = x + v minimise vᵀ S_x⁻¹ v subject to F·x̂ = c::

    r    = F·x − c                                   contradictions of the measured values
    S_r  = F S_x Fᵀ
    v    = −S_x Fᵀ S_r⁻¹ r                           improvements
    S_v  = S_x Fᵀ S_r⁻¹ F S_x                        covariance of the improvements
    S_x̂  = S_x − S_v                                 covariance of the reconciled values
    χ²   = rᵀ S_r⁻¹ r  (= vᵀ S_x⁻¹ v)                 global test: χ² ≤ χ²_{0.95}(rank F)
    |v_i| / √(S_v,ii) ≤ 1.96                          each measured value's normalized adjustment

(VDI 2048 Blatt 1:2000 "Uncertainties of measurement during acceptance tests on energy-conversion
and power plants — Fundamentals", sections on the reconciliation, the global quality criterion
and the gross-error test). A measured value that appears in no constraint is left unchanged (its
row of F is zero, so its improvement and S_v are zero; its normalized adjustment is NaN).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

#: confidence level of the global and the individual tests (VDI 2048-1: 95 %)
CONFIDENCE = 0.95
#: two-sided 95 % quantile of the normal distribution (VDI 2048-1 λ_95)
LAMBDA_95 = 1.959963984540054


@dataclass
class Reconciliation:
    """The outcome of one reconciliation (units those of the inputs).

    Attributes
    ----------
    names : list of str
    measured : ndarray (n,)             x
    reconciled : ndarray (n,)           x̂ = x + v
    improvement : ndarray (n,)          v
    covariance : ndarray (n, n)         S_x̂ (reconciled), k = 1
    covariance_measured : ndarray (n, n)  S_x
    standard_uncertainty : ndarray (n,)   √diag S_x
    reconciled_uncertainty : ndarray (n,) √diag S_x̂ (never above the measured one)
    normalized_adjustment : ndarray (n,)  |v_i| / √(S_v,ii) [-]; NaN where the value is not reconciled
    chi2 : float                        rᵀ S_r⁻¹ r [-]
    chi2_limit : float                  χ² quantile at CONFIDENCE with ``dof`` degrees of freedom [-]
    dof : int                           rank of F
    contradictions : ndarray (m,)       r = F·x − c
    """

    names: list
    measured: np.ndarray
    reconciled: np.ndarray
    improvement: np.ndarray
    covariance: np.ndarray
    covariance_measured: np.ndarray
    standard_uncertainty: np.ndarray
    reconciled_uncertainty: np.ndarray
    normalized_adjustment: np.ndarray
    chi2: float
    chi2_limit: float
    dof: int
    contradictions: np.ndarray

    @property
    def passed(self) -> bool:
        """The global test: χ² within its 95 % limit."""
        return bool(self.chi2 <= self.chi2_limit)

    def suspects(self, limit: float = LAMBDA_95) -> list:
        """Names whose normalized adjustment exceeds ``limit`` (the gross-error test), largest first."""
        na = np.nan_to_num(self.normalized_adjustment, nan=0.0)
        order = np.argsort(-na)
        return [self.names[i] for i in order if na[i] > limit]


def covariance_matrix(standard_uncertainty, correlation=None) -> np.ndarray:
    """S_x from standard uncertainties and a correlation matrix (identity when None)."""
    u = np.asarray(standard_uncertainty, float)
    r = np.eye(u.size) if correlation is None else np.asarray(correlation, float)
    return r * np.outer(u, u)


def reconcile(measured, covariance, constraints, rhs=None, names=None) -> Reconciliation:
    """Reconcile measured values under linear constraints (VDI 2048-1).

    Parameters
    ----------
    measured : array (n,)          measured values x [any unit, the same for all that a constraint adds]
    covariance : array (n, n)      S_x, symmetric positive semi-definite [unit²]
    constraints : array (m, n)     F (rows: constraints; coefficients [-])
    rhs : array (m,), optional     c (default zeros) [unit]
    names : list of str, optional

    Returns
    -------
    Reconciliation

    Raises
    ------
    ValueError   shapes that do not fit, or constraints whose S_r is singular (no redundancy)
    """
    from scipy.special import chdtri  # χ² quantile: chdtri(k, 1 − P) (scipy.stats costs seconds to import)

    x = np.asarray(measured, float)
    S = np.asarray(covariance, float)
    F = np.atleast_2d(np.asarray(constraints, float))
    n = x.size
    if S.shape != (n, n) or F.shape[1] != n:
        raise ValueError(f"shapes do not fit: x {x.shape}, S_x {S.shape}, F {F.shape}")
    c = np.zeros(F.shape[0]) if rhs is None else np.asarray(rhs, float)
    r = F @ x - c
    SFt = S @ F.T
    Sr = F @ SFt
    dof = int(np.linalg.matrix_rank(Sr))
    if dof < F.shape[0]:
        raise ValueError("the constraints are dependent or touch only values without uncertainty (S_r singular)")
    # Cholesky of S_r: solves and χ² in one factorisation
    L = np.linalg.cholesky(Sr)
    w = np.linalg.solve(L, r)
    chi2 = float(w @ w)
    K = np.linalg.solve(L.T, np.linalg.solve(L, SFt.T))  # S_r⁻¹ F S_x  (m, n)
    v = -(SFt @ np.linalg.solve(L.T, w))
    Sv = SFt @ K
    Sv = 0.5 * (Sv + Sv.T)
    Sxh = S - Sv
    Sxh = 0.5 * (Sxh + Sxh.T)
    dv = np.diag(Sv).copy()
    with np.errstate(invalid="ignore", divide="ignore"):
        na = np.where(dv > 1e-300 * max(1.0, float(np.max(np.abs(np.diag(S))))), np.abs(v) / np.sqrt(dv), np.nan)
    return Reconciliation(
        names=list(names) if names is not None else [f"x{i + 1}" for i in range(n)],
        measured=x, reconciled=x + v, improvement=v, covariance=Sxh, covariance_measured=S,
        standard_uncertainty=np.sqrt(np.clip(np.diag(S), 0, None)),
        reconciled_uncertainty=np.sqrt(np.clip(np.diag(Sxh), 0, None)),
        normalized_adjustment=na, chi2=chi2, chi2_limit=float(chdtri(dof, 1.0 - CONFIDENCE)), dof=dof,
        contradictions=r)
