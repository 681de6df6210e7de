"""Resistor-capacitor networks of a heated node: Foster sums and Cauer ladders.

Pure arithmetic on arrays (no case, no solver, no files).  A network maps the heat flow into
the heated node [W] to its temperature rise [K]; its impedance is ``Z(s)`` [K/W] with ``s``
the Laplace variable [1/s].

* **Foster** network: ``Z(s) = sum_i R_i / (1 + s R_i C_i)``, pairs ``(R_i, C_i)`` in series,
  each a resistor in parallel with a capacitor.  Its step response to 1 W is
  ``sum_i R_i (1 - exp(-t / tau_i))`` with ``tau_i = R_i C_i``.  Its inner nodes have no
  physical meaning.
* **Cauer** ladder: capacitor ``C_1`` from the heated node to ambient, resistor ``R_1`` to the
  next node, capacitor ``C_2`` from there to ambient, ..., and ``R_N`` from the last node to
  ambient: ``Z(s) = 1/(s C_1 + 1/(R_1 + 1/(s C_2 + 1/(R_2 + ...))))``.  A finite-volume slab
  heated at one face and held at the other is exactly such a ladder, so its nodes stand for
  depths in the wall.

:func:`cauer_from_foster` turns a Foster network into the Cauer ladder with the same impedance
by the continued-fraction expansion of ``1/Z(s)`` about ``s = infinity`` (Cauer's first form).
That expansion is badly conditioned (rounding errors grow by orders of magnitude per stage),
so it is done in exact rational arithmetic (:class:`fractions.Fraction`) on the binary values
of the floats: the ladder returned is the exact ladder of the Foster network given, rounded
once to floats.  :func:`foster_from_cauer` goes back through the symmetric generalised
eigenproblem of the ladder (scipy.linalg.eigh), which is well conditioned.
"""
from __future__ import annotations

from fractions import Fraction

import numpy as np

from fdwall.errors import InputError

__all__ = ["foster_impedance", "cauer_impedance", "foster_step_response",
           "cauer_from_foster", "foster_from_cauer", "cauer_step_response"]


def _pairs(R, C, where):
    """Validate a network: positive, finite R [K/W] and C [J/K] of equal count."""
    R = np.atleast_1d(np.asarray(R, dtype=float))
    C = np.atleast_1d(np.asarray(C, dtype=float))
    if R.ndim != 1 or R.shape != C.shape or R.size == 0:
        raise InputError(f"{where}: needs one capacity [J/K] per resistance [K/W] (at least "
                         f"one pair); got {R.size} resistances and {C.size} capacities.")
    if not (np.all(np.isfinite(R)) and np.all(np.isfinite(C)) and np.all(R > 0)
            and np.all(C > 0)):
        raise InputError(f"{where}: every resistance [K/W] and capacity [J/K] must be a "
                         f"positive finite number; got R={R.tolist()}, C={C.tolist()}.")
    return R, C


def foster_impedance(s, R, C):
    """Impedance [K/W] of a Foster network at Laplace variables ``s`` [1/s] (complex allowed).

    ``Z(s) = sum_i R_i / (1 + s R_i C_i)`` with R [K/W] and C [J/K].
    """
    R, C = _pairs(R, C, "foster_impedance")
    s = np.asarray(s, dtype=complex)
    return (R[None, :] / (1.0 + np.multiply.outer(s.ravel(), R * C))).sum(axis=1).reshape(
        s.shape)


def cauer_impedance(s, R, C):
    """Impedance [K/W] of a Cauer ladder at Laplace variables ``s`` [1/s] (complex allowed).

    Evaluated from the far end: ``Z_N = R_N``, then ``Z_k = R_k + 1/(s C_{k+1} + 1/Z_{k+1})``
    and finally ``Z = 1/(s C_1 + 1/Z_1)``; R [K/W], C [J/K], stage 1 at the heated node.
    """
    R, C = _pairs(R, C, "cauer_impedance")
    s = np.asarray(s, dtype=complex)
    z = np.full(s.shape, R[-1], dtype=complex)
    for k in range(R.size - 2, -1, -1):
        z = R[k] + 1.0 / (s * C[k + 1] + 1.0 / z)
    return 1.0 / (s * C[0] + 1.0 / z)


def foster_step_response(t, R, C):
    """Rise [K] of a Foster network's input node at times ``t`` [s] after a 1 W step from rest."""
    R, C = _pairs(R, C, "foster_step_response")
    t = np.asarray(t, dtype=float)
    return (R[None, :] * -np.expm1(-np.outer(t.ravel(), 1.0 / (R * C)))).sum(axis=1).reshape(
        t.shape)


# ---------------------------------------------------------------- exact polynomial arithmetic
# polynomials in s as lists of Fractions, lowest power first

def _trim(p):
    while len(p) > 1 and p[-1] == 0:
        p.pop()
    return p


def _mul_linear(p, a):
    """p(s) * (1 + a s)."""
    out = [Fraction(0)] * (len(p) + 1)
    for i, c in enumerate(p):
        out[i] += c
        out[i + 1] += a * c
    return out


def _sub_scaled(p, q, k, shift):
    """p(s) - k s^shift q(s) (new list)."""
    n = max(len(p), len(q) + shift)
    out = list(p) + [Fraction(0)] * (n - len(p))
    for i, c in enumerate(q):
        out[i + shift] -= k * c
    return _trim(out)


def cauer_from_foster(R_K_per_W, C_J_per_K) -> dict:
    """The Cauer ladder with the same impedance as a Foster network (exact arithmetic).

    Parameters
    ----------
    R_K_per_W : array_like
        Foster resistances R_i [K/W] (positive).
    C_J_per_K : array_like
        Foster capacities C_i [J/K] (positive), so tau_i = R_i C_i [s].

    Returns
    -------
    dict
        ``R_K_per_W`` [K/W] and ``C_J_per_K`` [J/K] of the ladder, stage 1 at the heated
        node (C_1 from the heated node to ambient, R_1 to the next node, ..., R_N to
        ambient); as many stages as Foster pairs with distinct time constants.

    Notes
    -----
    ``Z(s) = N(s)/D(s)`` with ``D = prod (1 + s tau_i)`` of degree n and N of degree n - 1.
    Cauer's first form expands ``Y = 1/Z = D/N`` about ``s = infinity``: ``C_1`` is the ratio
    of the leading coefficients (``Y ~ s C_1``); ``Y - s C_1`` has numerator degree n - 1,
    its inverse tends to ``R_1``; subtracting ``R_1`` leaves degree n - 2 in the numerator,
    and so on until the remainder vanishes.  All of it in :class:`fractions.Fraction`, so the
    only rounding is of the final values to floats (Guillemin, Synthesis of Passive Networks,
    1957, ch. 3, on RC driving-point impedances, from memory).  For a Foster network with
    positive terms every element of the ladder is positive.

    Raises
    ------
    InputError
        Non-positive or non-finite values, or unequal counts.
    """
    R, C = _pairs(R_K_per_W, C_J_per_K, "cauer_from_foster")
    # equal time constants are one pole: add their resistances (the sum keeps Z exact)
    tau = R * C
    order = np.argsort(tau)
    taus, Rs = [], []
    for i in order:
        if taus and tau[i] == taus[-1]:
            Rs[-1] += Fraction(float(R[i]))
        else:
            taus.append(float(tau[i]))
            Rs.append(Fraction(float(R[i])))
    tq = [Fraction(x) for x in taus]
    n = len(tq)
    D = [Fraction(1)]
    for a in tq:
        D = _mul_linear(D, a)
    N = [Fraction(0)] * n
    for i in range(n):
        p = [Rs[i]]
        for j in range(n):
            if j != i:
                p = _mul_linear(p, tq[j])
        for k, c in enumerate(p):
            N[k] += c
    num, den = _trim(D), _trim(N)   # Y = num/den, deg num = deg den + 1
    Rc, Cc = [], []
    for _ in range(n):
        if len(num) != len(den) + 1 or den[-1] == 0:
            break  # pragma: no cover - cannot happen for positive Foster terms
        ck = num[-1] / den[-1]
        num = _sub_scaled(num, den, ck, 1)          # Y - s C_k: deg num = deg den
        if len(num) != len(den) or num[-1] == 0:
            raise InputError("cauer_from_foster: the continued fraction broke down (a "
                             "remainder vanished early); the Foster network is degenerate.")
        rk = den[-1] / num[-1]
        den = _sub_scaled(den, num, rk, 0)          # 1/(Y - s C_k) - R_k
        Cc.append(ck)
        Rc.append(rk)
        if len(den) == 1 and den[0] == 0:
            break
    Rf = np.array([float(x) for x in Rc])
    Cf = np.array([float(x) for x in Cc])
    if Rf.size != n or np.any(Rf <= 0) or np.any(Cf <= 0):
        raise InputError("cauer_from_foster: the ladder has a non-positive element; the "
                         "Foster network is not a positive RC network.")  # pragma: no cover
    return {"R_K_per_W": Rf, "C_J_per_K": Cf}


def _ladder_modes(R, C):
    """Decay rates [1/s] and heated-node eigenvector components of a Cauer ladder."""
    from scipy.linalg import eigh
    n = R.size
    g = 1.0 / R
    G = np.zeros((n, n))
    for k in range(n):
        G[k, k] += g[k]
        if k + 1 < n:
            G[k + 1, k + 1] += g[k]
            G[k, k + 1] = G[k + 1, k] = -g[k]
    lam, V = eigh(G, np.diag(C))     # V^T C V = I
    return lam, V[0, :]


def foster_from_cauer(R_K_per_W, C_J_per_K) -> dict:
    """The Foster network of a Cauer ladder (stage 1 at the heated node).

    The ladder's conductance matrix G [W/K] (tridiagonal) and capacities C [J/K] give the
    generalised eigenproblem ``G v = lambda C v`` (scipy.linalg.eigh, ``v^T C v = 1``); then
    ``Z(s) = sum_i v_i[0]^2 / (lambda_i + s)``, so the Foster pairs are
    ``tau_i = 1/lambda_i`` [s], ``R_i = v_i[0]^2 / lambda_i`` [K/W], ``C_i = tau_i/R_i`` [J/K].

    Returns
    -------
    dict
        ``R_K_per_W``, ``C_J_per_K`` and ``tau_s`` (arrays, slowest first).
    """
    R, C = _pairs(R_K_per_W, C_J_per_K, "foster_from_cauer")
    lam, v0 = _ladder_modes(R, C)
    r = v0 ** 2 / lam
    tau = 1.0 / lam
    order = np.argsort(tau)[::-1]
    return {"R_K_per_W": r[order], "C_J_per_K": (tau / r)[order], "tau_s": tau[order]}


def cauer_step_response(t, R_K_per_W, C_J_per_K):
    """Rise [K] of a Cauer ladder's heated node at times ``t`` [s] after a 1 W step from rest.

    From the ladder's own modes (:func:`foster_from_cauer`); R [K/W], C [J/K].
    """
    f = foster_from_cauer(R_K_per_W, C_J_per_K)
    return foster_step_response(t, f["R_K_per_W"], f["C_J_per_K"])
