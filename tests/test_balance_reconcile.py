"""VDI 2048-1 reconciliation against the standard's Appendix A example and an independent solve.

The example (VDI 2048 Blatt 1:2000, Appendix A: the heat circuit of a steam-turbine plant, eleven
measured mass flows) as reproduced in open data-reconciliation code: the measured values and
their 95 % half-width confidence intervals in OpenModelica's test suite,
``testsuite/openmodelica/dataReconciliation/NewDataReconciliationSimpleTests/resources/
DataReconciliationSimpleTests.VDI2048Exple_Inputs.csv`` (OpenModelica/OpenModelica on GitHub),
its covariances in ``.../resources/VDI2048Exple_Corelation_inputs.csv`` (0.325385256 and
0.029635569, i.e. correlation coefficients 0.2 and 0.4 of the two feed-water and the two steam
flows), and the constraints and the χ² limit of 7.81473 (three auxiliary conditions, global test
passed, mD not reconciled) in the OpenModelica User's Guide chapter "Data Reconciliation".
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import minimize

from meterfix.balance.reconcile import LAMBDA_95, covariance_matrix, reconcile

NAMES = ["mFDKEI", "mFDKEII", "mSPI", "mSPII", "mV", "mHK", "mA7", "mA6", "mA5", "mHDNK", "mD"]
X = np.array([46.241, 45.668, 44.575, 44.319, 0.525, 69.978, 10.364, 3.744, 4.391, 18.498, 2.092])
HALF_WIDTH_95 = np.array([2.5, 2.5, 0.535, 0.532, 0.105, 0.854, 0.168, 0.058, 0.058, 0.205, 0.272])
# mFD1 = mFDKEI + mFDKEII − 0.2 mV; mFD2 = mSPI + mSPII − 0.6 mV; mFD3 = mHK + mA7 + mA6 + mA5 + 0.4 mV;
# mHDANZ = mA7 + mA6 + mA5; mFD1 = mFD2 = mFD3; mHDANZ = mHDNK, with the unmeasured flows eliminated:
F = np.array([
    [1, 1, -1, -1, 0.4, 0, 0, 0, 0, 0, 0],
    [0, 0, 1, 1, -1, -1, -1, -1, -1, 0, 0],
    [0, 0, 0, 0, 0, 0, 1, 1, 1, -1, 0],
], float)


def _example():
    u = HALF_WIDTH_95 / 1.96  # VDI 2048: confidence interval = 1.96 σ
    R = np.eye(11)
    R[0, 1] = R[1, 0] = 0.2
    R[2, 3] = R[3, 2] = 0.4
    return covariance_matrix(u, R), u


def test_vdi2048_covariances_as_reproduced():
    S, _ = _example()
    assert S[0, 1] == pytest.approx(0.325385256, rel=1e-8)   # OpenModelica's covariance file
    assert S[2, 3] == pytest.approx(0.029635569, rel=1e-7)


def test_vdi2048_example_global_test_and_constraints():
    S, u = _example()
    rec = reconcile(X, S, F, names=NAMES)
    assert rec.dof == 3
    assert rec.chi2_limit == pytest.approx(7.81473, abs=5e-6)      # printed in the User's Guide
    assert rec.passed                                              # "Result of global test: TRUE"
    assert np.max(np.abs(F @ rec.reconciled)) < 1e-12              # the constraints hold exactly
    assert rec.reconciled[10] == X[10] and np.isnan(rec.normalized_adjustment[10])  # mD not reconciled
    assert np.all(rec.reconciled_uncertainty <= u + 1e-15)         # reconciliation never adds uncertainty
    assert np.all(rec.reconciled_uncertainty[:10] < u[:10])
    # χ² two ways: rᵀ S_r⁻¹ r and vᵀ S_x⁻¹ v
    v = rec.improvement[:10]
    assert rec.chi2 == pytest.approx(float(v @ np.linalg.solve(S[:10, :10], v)), rel=1e-10)


def test_vdi2048_example_against_independent_constrained_solve():
    S, _ = _example()
    rec = reconcile(X, S, F, names=NAMES)
    Si = np.linalg.inv(S)
    # scipy SLSQP on the improvements scaled to O(1), tight tolerance, then one exact KKT polish
    scale = np.sqrt(np.diag(S))

    def obj(z):
        v = z * scale
        return float(v @ Si @ v)

    def grad(z):
        v = z * scale
        return 2.0 * (Si @ v) * scale

    cons = {"type": "eq", "fun": lambda z: F @ (X + z * scale), "jac": lambda z: F * scale}
    sol = minimize(obj, np.zeros(11), jac=grad, constraints=[cons], method="SLSQP",
                   options={"ftol": 1e-14, "maxiter": 1000})
    x_slsqp = X + sol.x * scale
    assert np.max(np.abs(x_slsqp - rec.reconciled)) < 1e-5
    # constrained least squares on the null space of F (scipy.linalg.null_space, lstsq): x̂ = x0 + N z
    from scipy.linalg import cholesky, lstsq, null_space

    N = null_space(F)
    x0 = lstsq(F, np.zeros(3))[0]                 # F x̂ = 0: a particular solution
    W = np.linalg.inv(cholesky(S, lower=True))    # whitening: |W (x̂ − x)|² = vᵀ S⁻¹ v
    z = lstsq(W @ N, W @ (X - x0))[0]
    assert np.max(np.abs(x0 + N @ z - rec.reconciled)) < 1e-10
    # the KKT system of the same problem solved by scipy.linalg (independent of our formulas)
    from scipy.linalg import solve

    n, m = 11, 3
    K = np.zeros((n + m, n + m))
    K[:n, :n] = 2 * Si
    K[:n, n:] = F.T
    K[n:, :n] = F
    b = np.concatenate([np.zeros(n), -F @ X])
    v_kkt = solve(K, b)[:n]
    assert np.max(np.abs(X + v_kkt - rec.reconciled)) < 1e-10


def test_normalized_adjustment_finds_a_gross_error():
    S, _ = _example()
    x = X.copy()
    x[5] += 6.0          # mHK with a gross error of about 14 σ
    rec = reconcile(x, S, F, names=NAMES)
    assert not rec.passed
    # the second constraint holds mSPI, mSPII, mV and mHK alone: the test flags that group (a gross
    # error smears over the values of its constraint), not the feed-water or the extraction flows
    assert "mHK" in rec.suspects() and set(rec.suspects()) <= {"mSPI", "mSPII", "mV", "mHK"}
    assert rec.normalized_adjustment[5] > LAMBDA_95


def test_dependent_constraints_refused():
    S, _ = _example()
    with pytest.raises(ValueError):
        reconcile(X, S, np.vstack([F, F[0]]))
