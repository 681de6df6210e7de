"""Independent reference solutions for the verification tests of the fdwall solver.

Nothing here imports fdwall: every function is a closed-form or series solution from the
heat-conduction literature, evaluated with numpy/scipy only, so the tests compare the solver
against something outside the project.

Sources (section and equation numbers as in the editions named, quoted from memory; the
formulas themselves are the standard ones and are cross-checked in the tests, e.g. the
eigenvalues against Incropera's Table 5.1 and the energy fractions against quadrature):

* CJ  -- H. S. Carslaw and J. C. Jaeger, *Conduction of Heat in Solids*, 2nd ed., Oxford 1959.
* INC -- F. P. Incropera, D. P. DeWitt, T. L. Bergman, A. S. Lavine, *Fundamentals of Heat and
  Mass Transfer*, 6th ed., Wiley 2007, chapters 3 and 5 (equation numbers from memory).
* OZ  -- M. N. Ozisik, *Heat Conduction*, 2nd ed., Wiley 1993 (Kirchhoff transformation).

All quantities SI: m, s, K, W, J.  Dimensionless groups: Fo = alpha t / L^2, Bi = h L / k,
theta* = (T - T_inf) / (T_i - T_inf).
"""
from __future__ import annotations

import math

import numpy as np
from scipy import special
from scipy.optimize import brentq

__all__ = [
    "SIGMA",
    "slab_eigenvalues", "slab_theta", "slab_energy_fraction",
    "cylinder_eigenvalues", "cylinder_theta", "cylinder_energy_fraction",
    "sphere_eigenvalues", "sphere_theta", "sphere_energy_fraction",
    "semi_infinite_flux", "semi_infinite_step", "semi_infinite_step_flux",
    "semi_infinite_step_energy",
    "slab_network", "cylinder_network", "sphere_network",
    "slab_linear_k", "cylinder_linear_k", "radiating_slab",
    "fv_slab_operator", "linear_ode_exact", "fv_slab_nonlinear_rhs",
]

#: Stefan-Boltzmann constant [W/m2/K4] (CODATA 2018, exact from the SI redefinition).
SIGMA = 5.670374419e-8

N_TERMS = 200   # series terms: at Fo >= 0.01 the 200th term is below exp(-200^2 pi^2 0.01) ~ 0


# ----------------------------------------------------------------------------- plane wall
def slab_eigenvalues(Bi: float, n: int = N_TERMS) -> np.ndarray:
    """First ``n`` positive roots of zeta tan(zeta) = Bi [-] (INC eq. 5.39c; CJ §3.11).

    The n-th root lies in ((n-1) pi, (n-1) pi + pi/2); it is bracketed there on the
    pole-free form zeta sin(zeta) - Bi cos(zeta) = 0.
    """
    def g(z):
        return z * math.sin(z) - Bi * math.cos(z)
    out = np.empty(n)
    for i in range(n):
        a = i * math.pi
        b = a + 0.5 * math.pi
        out[i] = brentq(g, a, b, xtol=1e-15, rtol=1e-15, maxiter=200)
    return out


def slab_theta(xstar, Fo: float, Bi: float, n: int = N_TERMS):
    """Dimensionless temperature theta* of a plane wall of half-thickness L, uniform start,
    convection (Bi = h L / k) at x* = 1 and symmetry (adiabatic) at x* = 0 [-].

    theta* = sum C_n exp(-zeta_n^2 Fo) cos(zeta_n x*), C_n = 4 sin(z)/(2 z + sin 2z)
    (INC eqs. 5.39a-b; CJ §3.11 eq. (8), the slab -l < x < l with radiation at its faces).
    """
    z = slab_eigenvalues(Bi, n)
    C = 4.0 * np.sin(z) / (2.0 * z + np.sin(2.0 * z))
    x = np.atleast_1d(np.asarray(xstar, float))
    out = (C * np.exp(-z * z * Fo) * np.cos(np.outer(x, z))).sum(axis=1)
    return out if np.ndim(xstar) else float(out[0])


def slab_energy_fraction(Fo: float, Bi: float, n: int = N_TERMS) -> float:
    """Q / Q0 of the plane wall: energy lost by time Fo over the most it can lose [-].

    Q/Q0 = 1 - sum C_n sin(zeta_n)/zeta_n exp(-zeta_n^2 Fo) (INC eq. 5.46 with every term kept,
    i.e. the integral of theta* over x* in [0, 1]).
    """
    z = slab_eigenvalues(Bi, n)
    C = 4.0 * np.sin(z) / (2.0 * z + np.sin(2.0 * z))
    return float(1.0 - np.sum(C * np.sin(z) / z * np.exp(-z * z * Fo)))


# ----------------------------------------------------------------------------- long cylinder
def cylinder_eigenvalues(Bi: float, n: int = N_TERMS) -> np.ndarray:
    """First ``n`` roots of zeta J1(zeta)/J0(zeta) = Bi [-] (INC eq. 5.50c; CJ §7.7).

    Solved on the pole-free form zeta J1(zeta) - Bi J0(zeta) = 0.  The n-th root lies between
    the (n-1)-th zero of J1 (0 for n = 1) and the n-th zero of J0, where the form changes sign.
    """
    j0 = special.jn_zeros(0, n)
    j1 = np.concatenate([[0.0], special.jn_zeros(1, n - 1)]) if n > 1 else np.array([0.0])

    def g(z):
        return z * special.j1(z) - Bi * special.j0(z)
    out = np.empty(n)
    for i in range(n):
        out[i] = brentq(g, j1[i], j0[i], xtol=1e-15, rtol=1e-15, maxiter=200)
    return out


def _cyl_coef(z):
    j0, j1 = special.j0(z), special.j1(z)
    return 2.0 / z * j1 / (j0 * j0 + j1 * j1)     # INC eq. 5.50b


def cylinder_theta(rstar, Fo: float, Bi: float, n: int = N_TERMS):
    """theta* of a long solid cylinder of radius r_o, uniform start, convection Bi = h r_o / k;
    Fo = alpha t / r_o^2 [-].

    theta* = sum C_n exp(-zeta_n^2 Fo) J0(zeta_n r*), C_n = (2/z) J1(z)/(J0(z)^2 + J1(z)^2)
    (INC eqs. 5.50a-c; CJ §7.7 eq. (1)).
    """
    z = cylinder_eigenvalues(Bi, n)
    C = _cyl_coef(z)
    r = np.atleast_1d(np.asarray(rstar, float))
    out = (C * np.exp(-z * z * Fo) * special.j0(np.outer(r, z))).sum(axis=1)
    return out if np.ndim(rstar) else float(out[0])


def cylinder_energy_fraction(Fo: float, Bi: float, n: int = N_TERMS) -> float:
    """Q / Q0 of the long cylinder [-]: 1 - 2 sum C_n exp(-zeta_n^2 Fo) J1(zeta_n)/zeta_n
    (INC eq. 5.51 with every term kept; integral of theta* 2 r* dr*)."""
    z = cylinder_eigenvalues(Bi, n)
    C = _cyl_coef(z)
    return float(1.0 - 2.0 * np.sum(C * np.exp(-z * z * Fo) * special.j1(z) / z))


# ----------------------------------------------------------------------------- sphere
def sphere_eigenvalues(Bi: float, n: int = N_TERMS) -> np.ndarray:
    """First ``n`` roots of 1 - zeta cot(zeta) = Bi [-] (INC eq. 5.53c; CJ §9.4).

    Solved as (1 - Bi) sin(zeta) - zeta cos(zeta) = 0; the n-th root lies in ((n-1) pi, n pi).
    """
    def g(z):
        return (1.0 - Bi) * math.sin(z) - z * math.cos(z)
    out = np.empty(n)
    for i in range(n):
        a = i * math.pi if i else 1e-6
        out[i] = brentq(g, a, (i + 1) * math.pi, xtol=1e-15, rtol=1e-15, maxiter=200)
    return out


def _sph_coef(z):
    return 4.0 * (np.sin(z) - z * np.cos(z)) / (2.0 * z - np.sin(2.0 * z))   # INC eq. 5.53b


def sphere_theta(rstar, Fo: float, Bi: float, n: int = N_TERMS):
    """theta* of a solid sphere of radius r_o, uniform start, convection Bi = h r_o / k [-].

    theta* = sum C_n exp(-zeta_n^2 Fo) sin(zeta_n r*)/(zeta_n r*),
    C_n = 4 (sin z - z cos z)/(2 z - sin 2z) (INC eqs. 5.53a-c; CJ §9.4 eq. (3)).
    """
    z = sphere_eigenvalues(Bi, n)
    C = _sph_coef(z)
    r = np.atleast_1d(np.asarray(rstar, float))
    zr = np.outer(r, z)
    with np.errstate(invalid="ignore", divide="ignore"):
        shape = np.where(zr > 0, np.sin(zr) / np.where(zr > 0, zr, 1.0), 1.0)
    out = (C * np.exp(-z * z * Fo) * shape).sum(axis=1)
    return out if np.ndim(rstar) else float(out[0])


def sphere_energy_fraction(Fo: float, Bi: float, n: int = N_TERMS) -> float:
    """Q / Q0 of the sphere [-]: 1 - 3 sum C_n exp(-zeta_n^2 Fo)(sin z - z cos z)/z^3
    (INC eq. 5.54 with every term kept; integral of theta* 3 r*^2 dr*)."""
    z = sphere_eigenvalues(Bi, n)
    C = _sph_coef(z)
    return float(1.0 - 3.0 * np.sum(C * np.exp(-z * z * Fo) * (np.sin(z) - z * np.cos(z)) / z ** 3))


# ----------------------------------------------------------------------------- semi-infinite
def semi_infinite_flux(x, t: float, q: float, k: float, alpha: float):
    """Temperature rise T - T_i [K] in a semi-infinite solid, constant flux q [W/m2] into its
    surface from t = 0 (CJ §2.9 eq. (4); INC eq. 5.59):

    T - T_i = (2 q/k) sqrt(alpha t/pi) exp(-x^2/(4 alpha t)) - (q x/k) erfc(x/(2 sqrt(alpha t))).
    """
    x = np.asarray(x, float)
    s = math.sqrt(alpha * t)
    return 2.0 * q / k * s / math.sqrt(math.pi) * np.exp(-x * x / (4.0 * s * s)) \
        - q * x / k * special.erfc(x / (2.0 * s))


def semi_infinite_step(x, t: float, Ts: float, Ti: float, alpha: float):
    """Temperature [K] of a semi-infinite solid at T_i whose surface is held at T_s from t = 0:
    (T - T_s)/(T_i - T_s) = erf(x/(2 sqrt(alpha t))) (CJ §2.4 eq. (4); INC eq. 5.57)."""
    x = np.asarray(x, float)
    return Ts + (Ti - Ts) * special.erf(x / (2.0 * math.sqrt(alpha * t)))


def semi_infinite_step_flux(t: float, Ts: float, Ti: float, k: float, alpha: float) -> float:
    """Surface heat flux into the solid for the step surface temperature [W/m2]:
    q = k (T_s - T_i)/sqrt(pi alpha t) (INC eq. 5.58; CJ §2.4)."""
    return k * (Ts - Ti) / math.sqrt(math.pi * alpha * t)


def semi_infinite_step_energy(t: float, Ts: float, Ti: float, k: float, alpha: float) -> float:
    """Heat that entered per unit area by time t for the step surface temperature [J/m2]:
    the time integral of :func:`semi_infinite_step_flux`, 2 k (T_s - T_i) sqrt(t/(pi alpha))."""
    return 2.0 * k * (Ts - Ti) * math.sqrt(t / (math.pi * alpha))


# ----------------------------------------------------------------------------- steady networks
def _network(R_parts, T_in, T_out):
    """Series network: resistances [K/W] from the inner fluid to the outer fluid.

    Returns (q [W] from inner to outer, temperatures [K] at every junction, inner first:
    T_in, after R_parts[0], ..., T_out).
    """
    R = np.asarray(R_parts, float)
    q = (T_in - T_out) / R.sum()
    T = T_in - q * np.concatenate([[0.0], np.cumsum(R)])
    return q, T


def slab_network(layers, contacts, h_in, h_out, T_in, T_out, area=1.0):
    """Steady composite slab with films and contact resistances (INC §3.1.3-3.1.4, eq. 3.19).

    layers : [(thickness [m], k [W/m/K]), ...] inner first; contacts : R''_tc per interface
    [m2K/W]; h_in/h_out [W/m2/K] (None: that face held at the fluid temperature).

    Returns (q [W], face and interface temperatures [K]): inner face, then for every interface
    the temperature on its inner side and on its outer side, then the outer face.
    """
    return _build_network([(L / (k * area)) for L, k in layers],
                          [c / area for c in contacts],
                          None if h_in is None else 1.0 / (h_in * area),
                          None if h_out is None else 1.0 / (h_out * area), T_in, T_out)


def cylinder_network(r_in, layers, contacts, h_in, h_out, T_in, T_out, length=1.0):
    """Steady composite hollow cylinder (INC §3.3.1, eq. 3.28: R = ln(r2/r1)/(2 pi k L); film
    1/(h 2 pi r L); contact R''/(2 pi r L)).  ``layers`` [(thickness, k)], inner first.
    Returns as :func:`slab_network`."""
    r = r_in + np.concatenate([[0.0], np.cumsum([t for t, _ in layers])])
    Rl = [math.log(r[j + 1] / r[j]) / (2 * math.pi * k * length) for j, (_, k) in enumerate(layers)]
    Rc = [c / (2 * math.pi * r[j + 1] * length) for j, c in enumerate(contacts)]
    Ri = None if h_in is None else 1.0 / (h_in * 2 * math.pi * r[0] * length)
    Ro = None if h_out is None else 1.0 / (h_out * 2 * math.pi * r[-1] * length)
    return _build_network(Rl, Rc, Ri, Ro, T_in, T_out)


def sphere_network(r_in, layers, contacts, h_in, h_out, T_in, T_out):
    """Steady composite hollow sphere (INC §3.4, eq. 3.36: R = (1/r1 - 1/r2)/(4 pi k); film
    1/(h 4 pi r^2); contact R''/(4 pi r^2)).  Returns as :func:`slab_network`."""
    r = r_in + np.concatenate([[0.0], np.cumsum([t for t, _ in layers])])
    Rl = [(1.0 / r[j] - 1.0 / r[j + 1]) / (4 * math.pi * k) for j, (_, k) in enumerate(layers)]
    Rc = [c / (4 * math.pi * r[j + 1] ** 2) for j, c in enumerate(contacts)]
    Ri = None if h_in is None else 1.0 / (h_in * 4 * math.pi * r[0] ** 2)
    Ro = None if h_out is None else 1.0 / (h_out * 4 * math.pi * r[-1] ** 2)
    return _build_network(Rl, Rc, Ri, Ro, T_in, T_out)


def _build_network(Rl, Rc, Ri, Ro, T_in, T_out):
    parts = [Ri or 0.0]
    for j, R in enumerate(Rl):
        parts.append(R)
        if j < len(Rc):
            parts.append(Rc[j])
    parts.append(Ro or 0.0)
    q, T = _network(parts, T_in, T_out)
    return q, T[1:-1]    # drop the two fluid temperatures: faces and interface sides remain


def slab_linear_k(k0: float, b: float, T0: float, L: float, T1: float, T2: float, x=None):
    """Steady slab with k = k0 (1 + b (T - T0)) and faces held at T1 (x = 0) and T2 (x = L).

    Exact heat flux [W/m2]: q = k_m (T1 - T2)/L with k_m = k at the mean temperature
    (T1 + T2)/2 (INC §3.2, problem 3.x "k varies linearly", and OZ §1-6 Kirchhoff transform:
    K(T) = int_T0^T k dT is linear in x).  With ``x`` [m] also returns the exact T(x) [K],
    solving K(T(x)) = K(T1) - q x for T (the root of a quadratic).
    """
    km = k0 * (1.0 + b * (0.5 * (T1 + T2) - T0))
    q = km * (T1 - T2) / L
    if x is None:
        return q
    x = np.asarray(x, float)

    def K(T):
        return k0 * ((T - T0) + 0.5 * b * (T - T0) ** 2)
    target = K(T1) - q * x
    # k0 (u + b u^2/2) = target, u = T - T0  ->  u = (-1 + sqrt(1 + 2 b target/k0))/b
    if b == 0.0:
        u = target / k0
    else:
        u = (-1.0 + np.sqrt(1.0 + 2.0 * b * target / k0)) / b
    return q, T0 + u


def cylinder_linear_k(k0: float, b: float, T0: float, r1: float, r2: float, T1: float,
                      T2: float, length: float = 1.0) -> float:
    """Steady heat flow [W] through a hollow cylinder with k = k0 (1 + b (T - T0)), faces held
    at T1 (r1) and T2 (r2): Q = 2 pi L k_m (T1 - T2)/ln(r2/r1), k_m = k at (T1 + T2)/2
    (Kirchhoff transform, OZ §1-6; the constant-k result INC eq. 3.27 with k -> k_m)."""
    km = k0 * (1.0 + b * (0.5 * (T1 + T2) - T0))
    return 2.0 * math.pi * length * km * (T1 - T2) / math.log(r2 / r1)


def radiating_slab(T_inner: float, L: float, k: float, h: float, T_fluid: float,
                   eps: float, T_sur: float):
    """Steady slab held at T_inner on one face, convection + grey radiation at the other.

    The surface energy balance k (T_inner - T_s)/L = h (T_s - T_fluid) + eps sigma
    (T_s^4 - T_sur^4) (INC eq. 1.12 with eq. 1.7; common textbook balance) is solved for
    T_s by brentq.  Returns (T_s [K], q [W/m2] through the wall).
    """
    def f(Ts):
        return k * (T_inner - Ts) / L - h * (Ts - T_fluid) - eps * SIGMA * (Ts ** 4 - T_sur ** 4)
    lo = min(T_fluid, T_sur, T_inner)
    hi = max(T_fluid, T_sur, T_inner)
    Ts = brentq(f, lo, hi, xtol=1e-13, rtol=1e-15, maxiter=500)
    return Ts, k * (T_inner - Ts) / L


# ----------------------------------------------------------------------------- semi-discrete
def fv_slab_operator(x, k: float, rhoc: float, area: float = 1.0):
    """Vertex-centred finite-volume semi-discretisation of a constant-property slab.

    Nodes at ``x`` [m] (both faces included); each node owns half of each adjacent cell, links
    conduct k A / dx (Patankar, *Numerical Heat Transfer and Fluid Flow*, 1980, §4.2-4.3;
    from memory).  Returns (C [J/K] per node, G [W/K] per link) built from ``x`` alone.
    """
    x = np.asarray(x, float)
    dx = np.diff(x)
    C = np.zeros(x.size)
    C[:-1] += 0.5 * dx * rhoc * area
    C[1:] += 0.5 * dx * rhoc * area
    G = k * area / dx
    return C, G


def linear_ode_exact(C, G, hA_out, T_fluid, T0, times):
    """Exact solution of C dT/dt = -A (T - T_fluid) for the slab chain of :func:`fv_slab_operator`
    with adiabatic node 0 and a film conductance ``hA_out`` [W/K] at the last node to a fluid at
    ``T_fluid`` [K]; uniform start ``T0`` [K].

    Solved by the symmetric generalised eigenproblem A v = lam C v (scipy.linalg.eigh), i.e.
    T(t) - T_fluid = V exp(-lam t) V^T C (T0 - T_fluid).  Returns (n_times, n_nodes) [K].
    """
    from scipy.linalg import eigh
    n = C.size
    A = np.zeros((n, n))
    for i, g in enumerate(G):
        A[i, i] += g
        A[i + 1, i + 1] += g
        A[i, i + 1] -= g
        A[i + 1, i] -= g
    A[-1, -1] += hA_out
    lam, V = eigh(A, np.diag(C))         # V^T C V = I
    a0 = V.T @ (C * (np.full(n, T0) - T_fluid))
    times = np.atleast_1d(np.asarray(times, float))
    return T_fluid + (V @ (a0[:, None] * np.exp(-np.outer(lam, times)))).T


def fv_slab_nonlinear_rhs(x, k_table, c_table, outer_flux, area: float = 1.0):
    """Right-hand side dT/dt = f(t, T) of the vertex-centred finite-volume slab with
    temperature-dependent properties, for an independent stiff integrator (scipy Radau).

    ``k_table`` and ``c_table`` are (T [K], values) of piecewise-linear k [W/m/K] and
    rho*cp [J/m3/K], held constant beyond their ends.  Links carry g (K(T_i) - K(T_j)) with the
    Kirchhoff potential K = int k dT (OZ §1-6), exact for the steady flow through each link;
    node i stores V_i rho c(T_i) dT_i/dt.  Node 0 is adiabatic; ``outer_flux(t, Ts)`` is the
    heat flux into the last node [W/m2].  Built from the node positions alone.
    """
    x = np.asarray(x, float)
    Tk, kv = (np.asarray(a, float) for a in k_table)
    Tc, cv = (np.asarray(a, float) for a in c_table)
    Kk = np.concatenate([[0.0], np.cumsum(0.5 * (kv[1:] + kv[:-1]) * np.diff(Tk))])

    def K(T):
        T = np.asarray(T, float)
        i = np.clip(np.searchsorted(Tk, T) - 1, 0, Tk.size - 2)
        d = np.clip(T, Tk[0], Tk[-1]) - Tk[i]
        slope = (kv[i + 1] - kv[i]) / (Tk[i + 1] - Tk[i])
        inside = Kk[i] + kv[i] * d + 0.5 * slope * d * d
        return inside + np.where(T < Tk[0], kv[0] * (T - Tk[0]), 0.0) \
            + np.where(T > Tk[-1], kv[-1] * (T - Tk[-1]), 0.0)

    dx = np.diff(x)
    V = np.zeros(x.size)
    V[:-1] += 0.5 * dx * area
    V[1:] += 0.5 * dx * area
    g = area / dx

    def f(t, T):
        flow = g * (K(T[:-1]) - K(T[1:]))
        net = np.zeros_like(T)
        net[:-1] -= flow
        net[1:] += flow
        net[-1] += area * outer_flux(t, T[-1])
        return net / (V * np.interp(T, Tc, cv))
    return f
