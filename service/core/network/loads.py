"""Voltage-dependent load models and the largest power a network can deliver to a load.

Load current (direction a -> b through the load) for port voltage v:

    |v| >= Vg:  i = c * |v|^(k-2) * v       with c = conj(S0) / V0^k
    |v| <  Vg:  i = c * Vg^(k-2) * v        (the impedance the load has at Vg)

so that S = v * conj(i) = S0 * (|v|/V0)^k above the guard voltage Vg: k = 1
is constant current, k = 0 constant power.  The guard keeps i finite at v = 0
and reflects that real equipment does not draw rated power at any voltage.

The current is not complex-differentiable (it depends on conj(v)), so Newton
works with real partial derivatives.  Writing v = x + j*y, r = |v|, q = k-2:

    d/dx [r^q v] = r^q + q r^(q-2) x v
    d/dy [r^q v] = j r^q + q r^(q-2) y v

(and, below the guard, Vg^q and j*Vg^q).  The 2x2 real Jacobian block of a
load is [[Re di/dx, Re di/dy], [Im di/dx, Im di/dy]].
"""

from __future__ import annotations

import math

import numpy as np


def load_currents(v: np.ndarray, c: np.ndarray, k: np.ndarray, vg: np.ndarray):
    """Currents, d i/dx, d i/dy and the below-guard mask for port voltages v."""
    v = np.asarray(v, dtype=np.complex128)
    r = np.abs(v)
    guarded = r < vg
    rr = np.where(guarded, vg, r)
    q = k - 2.0
    scale = rr**q
    i = c * scale * v
    t = np.where(guarded, 0.0, q * rr ** (q - 2.0))
    di_dx = c * (scale + t * v.real * v)
    di_dy = c * (1j * scale + t * v.imag * v)
    return i, di_dx, di_dy, guarded


def max_transferable_power(vth: complex, zth: complex, s_angle_rad: float) -> float:
    """Largest |S| a load of fixed power-factor angle phi can draw from (Vth, Zth).

    Derivation (maximum power transfer at fixed load angle): a load of fixed
    angle phi behaves, at any operating point, as an impedance z*e^{j phi} with
    z = |Z_load| > 0.  Then |I| = |Vth| / |Zth + z e^{j phi}| and

        |S|(z) = z |Vth|^2 / (|Zth|^2 + z^2 + 2 z beta),   beta = Re(Zth e^{-j phi})
                                                          = Rth cos(phi) + Xth sin(phi)

    d|S|/dz = 0 gives z^2 = |Zth|^2, i.e. z = |Zth| (magnitude matching), and

        |S|max = |Vth|^2 / (2 (|Zth| + beta)).

    |S|(z) rises then falls, so every |S| below the maximum is reached at two
    voltages (the upper, stable one and the lower one) and none above it: a
    constant-power load asking for more than |S|max has no operating point,
    which is voltage collapse.  At DC (phi = 0, X = 0) this is the familiar
    Vth^2 / (4 Rth).  (Textbook maximum-power-transfer result, from memory;
    the unit tests check it against a brute-force maximisation.)
    """
    mag = math.hypot(zth.real, zth.imag)  # abs() of a complex raises OverflowError where hypot gives inf
    beta = zth.real * np.cos(s_angle_rad) + zth.imag * np.sin(s_angle_rad)
    denom = 2.0 * (mag + beta)
    if not math.isfinite(mag) or denom <= 0.0:
        return 0.0 if not math.isfinite(mag) else math.inf
    v = math.hypot(vth.real, vth.imag)
    smax = float(v * v / denom)  # float ** raises OverflowError; * gives inf
    if math.isinf(smax) and math.isfinite(v):  # V^2 overflowed on the way, the quotient may not
        ratio = v / math.sqrt(denom)
        smax = ratio * ratio
    return smax


def upper_operating_voltage(vth: complex, zth: complex, s0: complex) -> float | None:
    """|V| of the normal (upper) operating point of a constant-power load S0 on (Vth, Zth).

    From Vth = V + Zth conj(S0) / conj(V): multiply by conj(V) and take the
    squared modulus, giving a quadratic in U = |V|^2:

        U^2 + (2 Re(Zth conj(S0)) - |Vth|^2) U + |Zth|^2 |S0|^2 = 0

    whose larger root is the upper solution.  None when the discriminant is
    negative (no operating point: the load exceeds the maximum transfer).
    """
    v = math.hypot(vth.real, vth.imag)
    zs = math.hypot(zth.real, zth.imag) * math.hypot(s0.real, s0.imag)
    b = 2.0 * (zth * s0.conjugate()).real - v * v  # products, not **: they give inf rather than raise
    disc = b * b - 4.0 * zs * zs
    if not math.isfinite(disc) or disc < 0:
        return None
    return float(np.sqrt((-b + math.sqrt(disc)) / 2.0))  # nan, as before, if the root is negative
