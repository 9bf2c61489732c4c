"""The :class:`Fit` value: everything one fitted candidate reports, frozen.

A :class:`Fit` is made either by the exact maximum-likelihood fit
(:mod:`lagwright.core.fit`) or by the fast conditional-sum-of-squares preview
(:mod:`lagwright.core.preview`); :attr:`Fit.kind` says which, and a preview is
never to be reported as a final result.

Counting conventions (stated in every memo):

* ``k`` (:attr:`Fit.n_params`) counts every estimated parameter: the AR and
  MA coefficients (seasonal ones included), the constant if present, and
  :math:`\\sigma^2`. AIC :math:`= -2\\ell + 2k`, AICc :math:`=` AIC
  :math:`+ 2k(k+1)/(n-k-1)`, BIC :math:`= -2\\ell + k\\log n`, HQIC
  :math:`= -2\\ell + 2k\\log\\log n`, with ``n`` the number of observed values
  of the differenced series (Akaike, 1974; Hurvich & Tsai, 1989; Schwarz,
  1978; Hannan & Quinn, 1979).
* Residuals are the one-step prediction errors of the differenced series.
  The ``burn_in`` residuals at the start (those the estimator conditions on)
  are left out of every diagnostic; for the exact fit there are none, since
  differencing is explicit and the ARMA state starts from its stationary
  distribution.

References
----------
Akaike, H. (1974). A new look at the statistical model identification.
*IEEE Trans. Automatic Control* 19(6), 716-723.
Hurvich, C. M. & Tsai, C.-L. (1989). Regression and time series model
selection in small samples. *Biometrika* 76(2), 297-307.
Schwarz, G. (1978). Estimating the dimension of a model. *Ann. Statist.* 6(2).
Hannan, E. J. & Quinn, B. G. (1979). The determination of the order of an
autoregression. *J. R. Statist. Soc. B* 41(2), 190-195.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .polynomials import Root, RootWarnings
from .spec import ModelSpec


@dataclass(frozen=True)
class ParamEstimate:
    """One estimated parameter.

    ``stat`` is the z statistic value/se, and ``p`` its two-sided p-value
    against the standard normal (large-sample theory of maximum likelihood).
    ``se``, ``stat`` and ``p`` are NaN when the covariance could not be
    computed.
    """

    name: str
    value: float
    se: float
    stat: float
    p: float

    @property
    def weak(self) -> bool:
        """|z| < 2: the usual rough mark of a term that has not earned its place (common practice)."""
        return bool(np.isfinite(self.stat) and abs(self.stat) < 2.0)


@dataclass(frozen=True)
class Convergence:
    """How the optimiser ended.

    Attributes
    ----------
    converged : bool
    message : str
        The optimiser's own message.
    iterations : int
    optimizer : str
        Name of the method that produced the reported estimates.
    start : str
        Which start values produced them (``"default"``, ``"css"``, ``"parent"``...).
    attempts : tuple of str
        One line per attempt made, in order, including retries.
    """

    converged: bool
    message: str = ""
    iterations: int = 0
    optimizer: str = ""
    start: str = ""
    attempts: tuple[str, ...] = ()


@dataclass(frozen=True, eq=False)
class Fit:
    """A fitted candidate (immutable; arrays are read-only).

    Attributes
    ----------
    spec : ModelSpec
    kind : {"exact", "preview"}
    ok : bool
        False when no estimate could be made; ``failure`` then says why and
        the numeric fields are NaN.
    params : tuple of ParamEstimate
        In statsmodels' order and names (``const``, ``ar.L1``, ``ma.S.L12``,
        ``sigma2``).
    cov_type : str
        How the standard errors were computed.
    sigma2, loglik, aic, aicc, bic, hqic : float
    nobs : int
        Observed values of the differenced series used by the likelihood.
    n_params : int
        k, as counted in the module docstring.
    rss : float
        Residual sum of squares on the estimation sample (for the nested
        F-test): for the exact fit :math:`\\sum_t e_t^2 \\sigma^2 / F_t`
        (the innovations scaled to the stationary variance), for the
        preview :math:`\\sum_t e_t^2`.
    residuals, std_residuals : numpy.ndarray
        Aligned with the differenced series; NaN where missing or burn-in.
    burn_in : int
        Leading residuals excluded from diagnostics.
    offset : int
        Position in the original series of residual 0 (observations lost to
        differencing).
    roots : tuple of Root
    root_warnings : RootWarnings
    convergence : Convergence
    warnings : tuple of str
        Everything the estimator warned about, in plain words.
    failure : str
        Why the fit failed ("" when ``ok``).
    elapsed : float
        Seconds spent fitting.
    """

    spec: ModelSpec
    kind: str
    ok: bool
    params: tuple[ParamEstimate, ...] = ()
    cov_type: str = ""
    sigma2: float = math.nan
    loglik: float = math.nan
    aic: float = math.nan
    aicc: float = math.nan
    bic: float = math.nan
    hqic: float = math.nan
    nobs: int = 0
    n_params: int = 0
    rss: float = math.nan
    residuals: np.ndarray = field(default_factory=lambda: np.empty(0))
    std_residuals: np.ndarray = field(default_factory=lambda: np.empty(0))
    burn_in: int = 0
    offset: int = 0
    roots: tuple[Root, ...] = ()
    root_warnings: RootWarnings = RootWarnings((), ())
    convergence: Convergence = Convergence(False)
    warnings: tuple[str, ...] = ()
    failure: str = ""
    elapsed: float = 0.0

    def __post_init__(self) -> None:
        for name in ("residuals", "std_residuals"):
            arr = np.array(getattr(self, name), dtype=float, copy=True)
            arr.setflags(write=False)
            object.__setattr__(self, name, arr)

    @property
    def is_preview(self) -> bool:
        return self.kind == "preview"

    @property
    def param_dict(self) -> dict[str, float]:
        """Estimates by name."""
        return {p.name: p.value for p in self.params}

    def param(self, name: str) -> ParamEstimate:
        for p in self.params:
            if p.name == name:
                return p
        raise KeyError(name)

    @property
    def n_coefficients(self) -> int:
        """Estimated coefficients other than σ² (AR, MA, constant)."""
        return self.n_params - 1

    def diagnostic_residuals(self) -> tuple[np.ndarray, np.ndarray]:
        """Residuals and standardized residuals that diagnostics use: burn-in and NaN removed."""
        resid = self.residuals[self.burn_in:]
        std = self.std_residuals[self.burn_in:]
        keep = np.isfinite(resid) & np.isfinite(std)
        return resid[keep], std[keep]

    def diagnostic_positions(self) -> np.ndarray:
        """Positions in the original series of the residuals returned by :meth:`diagnostic_residuals`."""
        resid = self.residuals[self.burn_in:]
        std = self.std_residuals[self.burn_in:]
        keep = np.flatnonzero(np.isfinite(resid) & np.isfinite(std))
        return keep + self.burn_in + self.offset


def information_criteria(loglik: float, k: int, n: int) -> dict[str, float]:
    """AIC, AICc, BIC and HQIC from a log-likelihood, k parameters and n observations."""
    aic = -2.0 * loglik + 2.0 * k
    aicc = aic + (2.0 * k * (k + 1) / (n - k - 1) if n - k - 1 > 0 else math.inf)
    bic = -2.0 * loglik + k * math.log(n)
    hqic = -2.0 * loglik + 2.0 * k * math.log(math.log(n)) if n > math.e else math.nan
    return {"aic": aic, "aicc": aicc, "bic": bic, "hqic": hqic}


def failed_fit(spec: ModelSpec, kind: str, reason: str, attempts: tuple[str, ...] = (), elapsed: float = 0.0) -> Fit:
    """A :class:`Fit` that says it failed, and why."""
    return Fit(
        spec=spec,
        kind=kind,
        ok=False,
        failure=reason,
        convergence=Convergence(False, message=reason, attempts=attempts),
        elapsed=elapsed,
    )
