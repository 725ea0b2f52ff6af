"""An exact reference for small networks: modified nodal analysis in rational arithmetic.

Every float the service starts from (a resistance, wL, 1/(wC) as the service forms them) is turned into the
rational number it exactly is (``fractions.Fraction``), and the equations are then solved with no rounding at
all, by Gaussian elimination over complex rationals.  The answer is the exact solution of the network the
service was given, so the service's error against it is its own solve's error alone.

Supported: VoltageSource (with internal resistance), Resistor, Inductor, Capacitor, CurrentSource.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction

from service.core.network import Capacitor, CurrentSource, Inductor, Network, Resistor, VoltageSource


@dataclass(frozen=True)
class Q:
    """A complex rational re + j im."""

    re: Fraction
    im: Fraction = Fraction(0)

    @staticmethod
    def of(z: complex | float) -> Q:
        z = complex(z)
        return Q(Fraction(z.real), Fraction(z.imag))

    def __add__(self, o: Q) -> Q:
        return Q(self.re + o.re, self.im + o.im)

    def __sub__(self, o: Q) -> Q:
        return Q(self.re - o.re, self.im - o.im)

    def __mul__(self, o: Q) -> Q:
        return Q(self.re * o.re - self.im * o.im, self.re * o.im + self.im * o.re)

    def __truediv__(self, o: Q) -> Q:
        d = o.re * o.re + o.im * o.im
        return Q((self.re * o.re + self.im * o.im) / d, (self.im * o.re - self.re * o.im) / d)

    def __neg__(self) -> Q:
        return Q(-self.re, -self.im)

    def is_zero(self) -> bool:
        return self.re == 0 and self.im == 0

    def to_complex(self) -> complex:
        return complex(float(self.re), float(self.im))


ZERO, ONE = Q(Fraction(0)), Q(Fraction(1))


def _admittance(e, omega: float) -> Q:
    # The impedance as the service forms it in floating point (model.py: Z = R, jwL, 1/(jwC)), then exactly 1/Z.
    if isinstance(e, Resistor):
        return ONE / Q.of(e.resistance_ohm)
    if isinstance(e, Inductor):
        return ONE / Q.of(1j * omega * e.inductance_h)
    if isinstance(e, Capacitor):
        return Q.of(1j * omega * e.capacitance_f)
    raise TypeError(type(e).__name__)


@dataclass(frozen=True)
class ExactSolution:
    voltages: dict[str, complex]  # node -> V (reference node 0)
    currents: dict[str, complex]  # element id -> current a -> b (sources: pos -> neg inside the source)


def solve_exact(net: Network) -> ExactSolution:
    omega = 2.0 * math.pi * (net.frequency_hz or 0.0)
    nodes = sorted({getattr(e, t) for e in net.elements for t in e.terminals} - {net.reference_node})
    index = {n: k for k, n in enumerate(nodes)}
    sources = [e for e in net.elements if isinstance(e, VoltageSource)]
    size = len(nodes) + len(sources)
    a = [[ZERO] * size for _ in range(size)]
    rhs = [ZERO] * size

    def at(node: str) -> int | None:
        return index.get(node)

    for e in net.elements:
        if isinstance(e, (Resistor, Inductor, Capacitor)):
            y = _admittance(e, omega)
            i, j = at(e.a), at(e.b)
            for p, q, sign in ((i, i, 1), (j, j, 1), (i, j, -1), (j, i, -1)):
                if p is not None and q is not None:
                    a[p][q] = a[p][q] + (y if sign > 0 else -y)
        elif isinstance(e, CurrentSource):
            j = Q.of(e.current_a * complex(math.cos(math.radians(e.phase_deg)), math.sin(math.radians(e.phase_deg))))
            if at(e.a) is not None:
                rhs[at(e.a)] = rhs[at(e.a)] - j
            if at(e.b) is not None:
                rhs[at(e.b)] = rhs[at(e.b)] + j
    for k, e in enumerate(sources):
        row = len(nodes) + k
        emf = e.voltage_v * complex(math.cos(math.radians(e.phase_deg)), math.sin(math.radians(e.phase_deg)))
        # v_pos - v_neg - Z i = E, with i flowing pos -> neg inside the source (the MNA branch convention).
        for node, sign in ((e.pos, ONE), (e.neg, -ONE)):
            if at(node) is not None:
                a[row][at(node)] = a[row][at(node)] + sign
                a[at(node)][row] = a[at(node)][row] + sign
        a[row][row] = -Q.of(complex(e.internal_resistance_ohm, e.internal_reactance_ohm))
        rhs[row] = Q.of(emf)
    x = _gauss(a, rhs)
    volts = {n: x[index[n]].to_complex() for n in nodes}
    exact_v = {n: x[index[n]] for n in nodes}
    exact_v[net.reference_node] = ZERO
    currents: dict[str, complex] = {}
    for e in net.elements:
        if isinstance(e, (Resistor, Inductor, Capacitor)):
            currents[e.id] = ((exact_v[e.a] - exact_v[e.b]) * _admittance(e, omega)).to_complex()
    for k, e in enumerate(sources):
        currents[e.id] = x[len(nodes) + k].to_complex()
    volts[net.reference_node] = 0j
    return ExactSolution(volts, currents)


def _gauss(a: list[list[Q]], b: list[Q]) -> list[Q]:
    n = len(b)
    for col in range(n):
        pivot = next((r for r in range(col, n) if not a[r][col].is_zero()), None)
        if pivot is None:
            raise ZeroDivisionError("exactly singular")
        a[col], a[pivot] = a[pivot], a[col]
        b[col], b[pivot] = b[pivot], b[col]
        for r in range(col + 1, n):
            if a[r][col].is_zero():
                continue
            f = a[r][col] / a[col][col]
            a[r] = [x - f * y for x, y in zip(a[r], a[col])]
            b[r] = b[r] - f * b[col]
    x = [ZERO] * n
    for r in range(n - 1, -1, -1):
        s = b[r]
        for c in range(r + 1, n):
            s = s - a[r][c] * x[c]
        x[r] = s / a[r][r]
    return x
