"""Uncertainty arithmetic: grid convergence index, GUM propagation, E_n numbers.

- Grid convergence index: Celik, Ghia, Roache, Freitas, Coleman & Raad 2008,
  "Procedure for estimation and reporting of uncertainty due to discretization in
  CFD applications", *J. Fluids Eng.* 130, 078001.
- Law of propagation of uncertainty, Welch-Satterthwaite, coverage factors:
  JCGM 100:2008 (GUM), Eqs. 10 and 13, Annex G (G.2b, Table G.2).
- E_n number: ISO 13528 (proficiency testing statistics), with expanded uncertainties.

Quantities are plain floats in the unit of the measurand; relative values are fractions.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import stats

# Roache's factors of safety: 1.25 with three or more grids (Celik et al. 2008 step 5),
# 3.0 when only two grids or no observed order is available (Roache 1997).
SAFETY_THREE_GRIDS = 1.25
SAFETY_NO_ORDER = 3.0
# Order assumed when the observed order cannot be determined: first order gives the
# widest band of the usual formal orders (GCI falls as p rises); our choice, documented.
FALLBACK_ORDER = 1.0


@dataclass(frozen=True)
class GCIResult:
    """Outcome of the three-grid procedure of Celik et al. (2008); relative values are fractions.

    ``fallback`` is True when the observed order p could not be determined (equal
    solutions, non-converging iteration, p <= 0); then p = FALLBACK_ORDER, the safety
    factor is SAFETY_NO_ORDER and the error uses the largest grid-to-grid change, and
    ``note`` says why.
    """

    r21: float
    r32: float
    p: float
    phi_ext: float
    e_a21: float
    e_ext21: float
    gci_fine21: float
    gci_coarse32: float
    asymptotic_ratio: float
    oscillatory: bool
    fallback: bool = False
    note: str = ""


def apparent_order(r21: float, r32: float, eps21: float, eps32: float,
                   tol: float = 1e-12, max_iter: int = 500) -> float | None:
    """Observed order p by fixed-point iteration (Celik et al. 2008, Eqs. 3a-3c).

    p = |ln|eps32/eps21| + q(p)| / ln r21,  q(p) = ln((r21^p - s)/(r32^p - s)),
    s = sign(eps32/eps21). Returns None when the iteration does not settle or p <= 0.
    """
    s = 1.0 if eps32 / eps21 > 0.0 else -1.0
    log_ratio = math.log(abs(eps32 / eps21))
    p = abs(log_ratio) / math.log(r21)
    for _ in range(max_iter):
        num, den = r21 ** p - s, r32 ** p - s
        if num <= 0.0 or den <= 0.0:
            return None
        p_new = abs(log_ratio + math.log(num / den)) / math.log(r21)
        if abs(p_new - p) <= tol * max(1.0, p):
            return p_new if p_new > 0.0 else None
        p = p_new
    return None


def _grid_ratios(n_cells, dim: int) -> tuple[float, float]:
    if len(n_cells) != 3 or dim not in (1, 2, 3):
        raise ValueError("n_cells must be three cell counts (fine, medium, coarse) and dim 1, 2 or 3")
    n1, n2, n3 = (float(n) for n in n_cells)
    if not n1 > n2 > n3 > 0:
        raise ValueError(f"n_cells = {tuple(n_cells)} must be positive and ordered "
                         "fine -> coarse (N1 > N2 > N3)")
    return (n1 / n2) ** (1.0 / dim), (n2 / n3) ** (1.0 / dim)


def gci_three_grids(n_cells, phi, dim: int = 2, safety: float = SAFETY_THREE_GRIDS) -> GCIResult:
    """Grid convergence index from three grids (Celik et al. 2008, steps 1-5).

    h_i = (V/N_i)^(1/dim), r21 = h2/h1, r32 = h3/h2; eps21 = phi2 - phi1, eps32 = phi3 - phi2;
    phi_ext = (r21^p phi1 - phi2)/(r21^p - 1); e_a21 = |(phi1 - phi2)/phi1|;
    e_ext21 = |(phi_ext - phi1)/phi_ext|; GCI_fine21 = F_s e_a21/(r21^p - 1);
    GCI_coarse32 = F_s e_a32/(r32^p - 1); asymptotic ratio GCI32/(r21^p GCI21) (~1 when
    in the asymptotic range). Oscillatory convergence (eps32/eps21 < 0) is flagged and
    handled with s = -1 as in the paper.
    """
    r21, r32 = _grid_ratios(n_cells, dim)
    phi1, phi2, phi3 = (float(v) for v in phi)
    if phi1 == 0.0 or phi2 == 0.0:
        raise ValueError("phi: the fine and medium solutions must be non-zero for relative errors")
    eps21, eps32 = phi2 - phi1, phi3 - phi2
    oscillatory = eps21 * eps32 < 0.0
    e_a21, e_a32 = abs(eps21 / phi1), abs(eps32 / phi2)
    p = apparent_order(r21, r32, eps21, eps32) if eps21 != 0.0 and eps32 != 0.0 else None
    if p is None:
        return _gci_fallback(r21, r32, phi1, phi2, phi3, oscillatory)
    rp21, rp32 = r21 ** p, r32 ** p
    phi_ext = (rp21 * phi1 - phi2) / (rp21 - 1.0)
    gci21 = safety * e_a21 / (rp21 - 1.0)
    gci32 = safety * e_a32 / (rp32 - 1.0)
    return GCIResult(r21=r21, r32=r32, p=p, phi_ext=phi_ext, e_a21=e_a21,
                     e_ext21=abs((phi_ext - phi1) / phi_ext), gci_fine21=gci21,
                     gci_coarse32=gci32, asymptotic_ratio=gci32 / (rp21 * gci21),
                     oscillatory=oscillatory)


def _gci_fallback(r21, r32, phi1, phi2, phi3, oscillatory) -> GCIResult:
    """Conservative band when p is undefined: F_s = 3, p = 1, largest change of the three.

    Our choice (Celik et al. give no recipe for it): using max(|eps21|, |eps32|) stops
    phi1 = phi2 from reporting a zero error when the coarse grid disagrees.
    """
    change = max(abs(phi2 - phi1), abs(phi3 - phi2)) / abs(phi1)
    gci21 = SAFETY_NO_ORDER * change / (r21 ** FALLBACK_ORDER - 1.0)
    gci32 = SAFETY_NO_ORDER * change * abs(phi1 / phi2) / (r32 ** FALLBACK_ORDER - 1.0)
    note = ("observed order undefined (equal solutions or non-converging order iteration); "
            f"used p = {FALLBACK_ORDER:g}, F_s = {SAFETY_NO_ORDER:g} and the largest grid-to-grid change")
    return GCIResult(r21=r21, r32=r32, p=FALLBACK_ORDER, phi_ext=math.nan,
                     e_a21=abs((phi1 - phi2) / phi1), e_ext21=math.nan, gci_fine21=gci21,
                     gci_coarse32=gci32, asymptotic_ratio=math.nan, oscillatory=oscillatory,
                     fallback=True, note=note)


# ---------------------------------------------------------------- GUM (JCGM 100:2008)

def combine(sensitivities, standard_uncertainties, correlation=None) -> float:
    """Combined standard uncertainty by the law of propagation (GUM Eq. 13).

    u_c^2 = sum_i sum_j c_i c_j u_i u_j r_ij, with r the correlation matrix (identity
    when None, which is GUM Eq. 10). Sensitivities c_i = df/dx_i, u_i >= 0.
    """
    c = np.asarray(sensitivities, dtype=float).ravel()
    u = np.asarray(standard_uncertainties, dtype=float).ravel()
    if c.shape != u.shape or c.size == 0:
        raise ValueError("sensitivities and standard_uncertainties must be equal-length, non-empty lists")
    if not (np.all(np.isfinite(c)) and np.all(np.isfinite(u)) and np.all(u >= 0.0)):
        raise ValueError("standard_uncertainties must be finite and >= 0, sensitivities finite")
    cu = c * u
    if correlation is None:
        return math.sqrt(float(cu @ cu))
    r = _check_correlation(correlation, c.size)
    return math.sqrt(max(float(cu @ r @ cu), 0.0))  # rounding can dip below 0 at r = -1


def _check_correlation(correlation, n: int) -> np.ndarray:
    r = np.asarray(correlation, dtype=float)
    if r.shape != (n, n):
        raise ValueError(f"correlation must be a {n} x {n} matrix, got shape {r.shape}")
    if not (np.allclose(r, r.T) and np.allclose(np.diag(r), 1.0) and np.all(np.abs(r) <= 1.0)):
        raise ValueError("correlation must be symmetric with unit diagonal and entries in [-1, 1]")
    return r


def expanded(u_c: float, k: float = 2.0) -> float:
    """Expanded uncertainty U = k u_c (GUM 6.2.1); k = 2 gives about 95 % for large nu_eff."""
    if not (u_c >= 0.0 and k > 0.0):
        raise ValueError("u_c must be >= 0 and k > 0")
    return k * u_c


def welch_satterthwaite(u_i, nu_i) -> float:
    """Effective degrees of freedom nu_eff = u_c^4 / sum(u_i^4/nu_i) (GUM Eq. G.2b).

    u_i are the contributions c_i u(x_i); nu_i may be math.inf (Type B taken as exact).
    """
    u = np.abs(np.asarray(u_i, dtype=float).ravel())
    nu = np.asarray(nu_i, dtype=float).ravel()
    if u.shape != nu.shape or u.size == 0 or np.any(nu <= 0.0) or np.any(np.isnan(nu)):
        raise ValueError("u_i and nu_i must be equal-length lists with every nu_i > 0 (inf allowed)")
    finite = np.isfinite(nu) & (u > 0.0)
    denominator = float(np.sum(u[finite] ** 4 / nu[finite]))
    if denominator == 0.0:
        return math.inf
    return float(np.sum(u ** 2)) ** 2 / denominator


def coverage_factor(nu_eff: float, p: float = 0.95) -> float:
    """Student-t coverage factor k_p = t_p(nu_eff), two-sided (GUM G.3, Table G.2).

    A non-integer nu_eff >= 1 is truncated to the next lower integer (GUM G.4.1), which
    errs on the wide side.
    """
    if not (nu_eff > 0.0 and 0.0 < p < 1.0):
        raise ValueError("nu_eff must be > 0 and p in (0, 1)")
    if math.isinf(nu_eff):
        return float(stats.norm.ppf(0.5 + p / 2.0))
    nu = math.floor(nu_eff) if nu_eff >= 1.0 else nu_eff
    return float(stats.t.ppf(0.5 + p / 2.0, nu))


@dataclass(frozen=True)
class Component:
    """One line of an uncertainty budget (independent of the other lines).

    ``standard_uncertainty`` is u(x_i) in the input's unit, ``sensitivity`` c_i in
    output unit per input unit, ``dof`` nu_i (inf for Type B taken as exact).
    """

    name: str
    standard_uncertainty: float
    sensitivity: float = 1.0
    dof: float = math.inf
    distribution: str = "normal"

    @property
    def contribution(self) -> float:
        """|c_i| u(x_i), in the output's unit."""
        return abs(self.sensitivity) * self.standard_uncertainty


@dataclass(frozen=True)
class Budget:
    """A list of independent components that sums (GUM Eq. 10) and prints itself."""

    components: tuple[Component, ...] = field(default_factory=tuple)
    unit: str = ""

    def combined(self) -> float:
        return combine([c.sensitivity for c in self.components],
                       [c.standard_uncertainty for c in self.components])

    def effective_dof(self) -> float:
        return welch_satterthwaite([c.contribution for c in self.components],
                                   [c.dof for c in self.components])

    def expanded(self, p: float = 0.95) -> tuple[float, float]:
        """(U, k) with k = t_p(nu_eff) from Welch-Satterthwaite."""
        k = coverage_factor(self.effective_dof(), p)
        return k * self.combined(), k

    def rows(self) -> list[tuple[str, float, float, float, float, str]]:
        """(name, u(x_i), c_i, |c_i| u(x_i), nu_i, distribution) per component."""
        return [(c.name, c.standard_uncertainty, c.sensitivity, c.contribution, c.dof,
                 c.distribution) for c in self.components]

    def __str__(self) -> str:
        head = f"{'component':<28}{'u(x_i)':>12}{'c_i':>12}{'|c_i| u':>12}{'nu':>8}  distribution"
        lines = [head]
        for name, u, c, contrib, nu, dist in self.rows():
            nu_text = "inf" if math.isinf(nu) else f"{nu:.0f}"
            lines.append(f"{name:<28}{u:>12.4g}{c:>12.4g}{contrib:>12.4g}{nu_text:>8}  {dist}")
        nu_eff = self.effective_dof()
        nu_text = "inf" if math.isinf(nu_eff) else f"{nu_eff:.1f}"
        lines.append(f"{'combined u_c ' + self.unit:<28}{'':>24}{self.combined():>12.4g}{nu_text:>8}")
        return "\n".join(lines)


# ---------------------------------------------------------------- ISO 13528

def en_number(x: float, U_x: float, X: float, U_X: float) -> float:
    """E_n = (x - X)/sqrt(U_x^2 + U_X^2) with expanded (k = 2) uncertainties (ISO 13528).

    |E_n| <= 1 is satisfactory, > 1 unsatisfactory (see :func:`en_satisfactory`).
    """
    for name, value in (("x", x), ("U_x", U_x), ("X", X), ("U_X", U_X)):
        if not math.isfinite(value):
            raise ValueError(f"{name} must be finite, got {value!r}")
    if U_x < 0.0 or U_X < 0.0 or U_x == U_X == 0.0:
        raise ValueError("U_x and U_X must be >= 0 and not both zero")
    return (x - X) / math.hypot(U_x, U_X)


def en_satisfactory(en: float) -> bool:
    """ISO 13528 criterion: |E_n| <= 1."""
    return abs(en) <= 1.0
