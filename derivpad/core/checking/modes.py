"""A closed form as a sum of modes: u(t - c)·(t - c)^k e^{a(t - c)}(A cos b(t - c) + B sin b(t - c)).

Every solution the engine writes is such a sum (one group of modes per switching time). Read
this way, a response is evaluated stably — each mode at its own shifted time and only where
its step is on, so no e^{a - at} factor is ever evaluated before its switch — and its
behaviour over all t ≥ 0 is known: which modes grow, what is left as t → ∞, and a bound on
the decaying part after any time. :mod:`derivpad.core.response` reads peaks, final values and
settling from it. The same code serves one unknown or many (each unknown and derived
quantity is its own sum of modes).

``symbolic_modes`` reads the modes of a SymPy expression once (parameters may stay symbols);
``ModeTable.compile`` turns them into a function of the parameters' numbers; ``Modes`` holds
the numbers and evaluates them.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

import mpmath
import numpy as np
import sympy as sp

from ..reading.parse import T

__all__ = ["ModeTable", "Modes", "NotAModeSum", "symbolic_modes"]

_TAU = sp.Symbol("tau_m", real=True)
_CANCELLATION = 1e6
"""Terms this many times larger than their sum are re-added in 40-digit arithmetic."""


class NotAModeSum(ValueError):
    """The expression is not a sum of delayed exponential-polynomial-trigonometric modes."""


# -- reading the modes of an expression ----------------------------------------------------

def _linear(arg, what):
    """arg = slope·τ + offset with slope, offset free of τ."""
    slope = sp.diff(arg, _TAU)
    if slope.has(_TAU):
        raise NotAModeSum(f"{what} of a non-linear argument {arg}")
    return slope, sp.expand(arg - slope * _TAU)


def _term_mode(term):
    """One product → [(k, a, b, cos coefficient, sin coefficient)], b taken ≥ 0 where numeric."""
    coef, rest = term.as_independent(_TAU, as_Add=False)
    k, a = 0, sp.Integer(0)
    trig = None
    for factor in sp.Mul.make_args(rest):
        if factor == 1:
            continue
        base, power = factor.as_base_exp()
        if base == _TAU and power.is_Integer and power > 0:
            k += int(power)
        elif isinstance(factor, sp.exp) or (base == sp.E):
            arg = factor.args[0] if isinstance(factor, sp.exp) else power
            slope, offset = _linear(arg, "exponential")
            a += slope
            coef *= sp.exp(offset)
        elif isinstance(factor, (sp.cos, sp.sin)) and trig is None:
            b, phase = _linear(factor.args[0], "trigonometric function")
            trig = (type(factor), b, phase)
        else:
            raise NotAModeSum(f"factor {factor} is not τ^k, e^(aτ), cos(bτ) or sin(bτ)")
    if trig is None:
        return [(k, a, sp.Integer(0), coef, sp.Integer(0))]
    kind, b, phase = trig
    if b.is_number and b < 0:
        b, phase = -b, -phase
        sign = -1 if kind is sp.sin else 1
        coef = coef * sign
    # cos(bτ + φ) = cos φ cos bτ - sin φ sin bτ; sin(bτ + φ) = sin φ cos bτ + cos φ sin bτ
    if kind is sp.cos:
        return [(k, a, b, coef * sp.cos(phase), -coef * sp.sin(phase))]
    return [(k, a, b, coef * sp.sin(phase), coef * sp.cos(phase))]


def _cleared(piece):
    """A product with a denominator such as 1/(c₁e^{τ/10} + c₂e^{τ/10}) rewritten with the
    exponential taken out of it (SymPy leaves such forms after a substitution)."""
    changed = False
    out = []
    for factor in sp.Mul.make_args(piece):
        base, power = factor.as_base_exp()
        if isinstance(base, sp.Add) and base.has(_TAU) and power.is_Integer and power < 0:
            common = sp.factor_terms(base)
            factor = sp.Mul(*[f ** power for f in sp.Mul.make_args(common)])
            changed = True
        out.append(factor)
    if not changed:
        return [piece]
    # no expand here: it would put the exponential back into the denominator
    return [sp.Mul(*out)]


def _delay_of(term):
    """(c, the rest) for a term with one Heaviside(t - c) factor; (0, term) for none."""
    steps = [f for f in sp.Mul.make_args(term) if isinstance(f, sp.Heaviside)]
    if not steps:
        return sp.Integer(0), term
    if len(steps) > 1:
        raise NotAModeSum(f"a product of steps {term}")
    arg = steps[0].args[0]
    slope = sp.diff(arg, T)
    if slope != 1 or arg.has(sp.Heaviside):
        raise NotAModeSum(f"a step of {arg}")
    rest = sp.Mul(*[f for f in sp.Mul.make_args(term) if f is not steps[0]])
    return sp.expand(T - arg), rest


def symbolic_modes(expr: sp.Expr) -> tuple:
    """The modes of a Heaviside-form expression in t: ((c, k, a, b, A, B), ...), grouped.

    Impulse terms (DiracDelta) are left out: they act at an instant, not over time.
    """
    expr = sp.Integer(0) + expr  # a SymPy expression or a number; text is never read here
    expr = sp.expand(expr.replace(sp.DiracDelta, lambda *a: sp.Integer(0)),
                     power_exp=False, trig=False)
    table: dict = {}
    for term in sp.Add.make_args(expr):
        if term == 0:
            continue
        delay, rest = _delay_of(term)
        local = sp.expand(rest.subs(T, _TAU + delay), power_exp=False, trig=False)
        pieces = [p for q in sp.Add.make_args(local) if q != 0 for p in _cleared(q)]
        for piece in pieces:
            if piece == 0:
                continue
            for k, a, b, ca, cb in _term_mode(piece):
                key = (delay, k, sp.expand(a), sp.expand(b))
                old = table.get(key, (sp.Integer(0), sp.Integer(0)))
                table[key] = (old[0] + ca, old[1] + cb)
    return tuple((c, k, a, b, ca, cb) for (c, k, a, b), (ca, cb) in table.items())


class ModeTable:
    """The modes of an expression, compiled once for numbers of ``symbols``."""

    def __init__(self, expr: sp.Expr, symbols=()):
        self.symbols = tuple(symbols)
        args = tuple(sp.Symbol(n, positive=True) for n in self.symbols)
        rows = symbolic_modes(expr)
        self.powers = np.array([r[1] for r in rows], dtype=int)
        fields = [[sp.Integer(0) + r[i] for r in rows] for i in (0, 2, 3, 4, 5)]
        self._float = sp.lambdify(args, fields, modules="math") if rows else None
        # the coefficients again at 40 digits, for the terms that cancel (see Modes.__call__)
        self._exact = (sp.lambdify(args, fields, modules="mpmath") if rows else None)
        self._rows, self._args, self._numpy = rows, args, None

    def __len__(self) -> int:
        """How many modes the expression has (0: it is zero)."""
        return len(self._rows)

    def batch(self, columns) -> "ModeBatch":
        """The modes for many cases at once: ``columns`` holds an array of numbers per symbol
        (in the order of ``symbols``); see :mod:`derivpad.core.checking.mode_batch`."""
        from .mode_batch import ModeBatch
        n = len(columns[0]) if columns else 1
        if not self._rows:
            z = np.zeros((n, 0))
            return ModeBatch(self.powers, np.zeros(0, int), np.zeros(0, int), np.zeros((n, 1)),
                             z, z, z, z, np.zeros(n, dtype=bool))
        if self._numpy is None:
            self._numpy = (sp.lambdify(self._args, [[sp.Integer(0) + r[i] for r in self._rows]
                                                    for i in (0, 2, 3, 4, 5)], modules="numpy"),
                           *_structure(self._rows))
        fn, switch_of, pole_of, delays = self._numpy
        with np.errstate(all="ignore"):
            fields = [np.stack([_column(x, n) for x in f], axis=1)
                      for f in fn(*[np.asarray(c, dtype=float) for c in columns])]
        bad = np.zeros(n, dtype=bool)
        for f in fields:
            bad |= ~np.all(np.isfinite(f.real) & (np.abs(f.imag) <= 1e-9 * (1 + np.abs(f.real))),
                           axis=1)
        delay, a, b, ca, cb = (f.real for f in fields)
        switches = np.stack([delay[:, m] for m in delays], axis=1)
        good = np.nonzero(~bad)[0]
        order = np.argsort(switches[good[0]]) if good.size else np.arange(len(delays))
        switches = switches[:, order]
        switch_of = np.argsort(order)[switch_of]
        bad |= ~np.all(np.diff(switches, axis=1) > 0, axis=1) | (switches[:, 0] < 0)
        sign = np.where(b < 0, -1.0, 1.0)  # cos(-bτ) = cos bτ, sin(-bτ) = -sin bτ
        return ModeBatch(self.powers.copy(), switch_of, pole_of, switches, a, np.abs(b), ca,
                         sign * cb, bad)

    def at(self, values=()) -> "Modes":
        """The modes for numbers (a tuple in the order of ``symbols``)."""
        if self._float is None:
            return Modes.empty()
        nums = tuple(float(v) for v in values)
        try:
            delay, a, b, ca, cb = (np.array([complex(x) for x in f]) for f in self._float(*nums))
        except (ValueError, ZeroDivisionError, OverflowError, TypeError) as exc:
            raise NotAModeSum(f"the modes cannot be evaluated for these numbers ({exc})") from exc
        if np.any(np.abs(np.concatenate([delay.imag, a.imag, b.imag])) > 1e-9 * (
                1 + np.abs(np.concatenate([delay.real, a.real, b.real])))):
            raise NotAModeSum("a mode's rate, frequency or delay is complex for these numbers")
        with mpmath.workdps(40):
            ex = [list(f) for f in self._exact(*[mpmath.mpf(x) for x in nums])]
        flip = b.real < 0  # cos(-bτ) = cos bτ, sin(-bτ) = -sin bτ
        for i in np.nonzero(flip)[0]:
            ex[2][i], ex[4][i] = -ex[2][i], -ex[4][i]
        sign = np.where(flip, -1.0, 1.0)
        return _merged(Modes(delay.real, self.powers.copy(), a.real, np.abs(b.real),
                             ca.real, sign * cb.real, tuple(tuple(f) for f in ex)))


def _column(x, n: int) -> np.ndarray:
    """A lambdified field as a complex column of n values (a constant repeated)."""
    return np.broadcast_to(np.asarray(x, dtype=complex), (n,))


def _structure(rows) -> tuple:
    """(switching time of each mode, pole of each mode, the mode that first names each
    switching time): the symbolic sum's shape, shared by every case of a form."""
    delays: dict = {}
    poles: dict = {}
    switch_of, pole_of = [], []
    for m, (c, _, a, b, _, _) in enumerate(rows):
        switch_of.append(delays.setdefault(c, len(delays)))
        key = (a, b) if (a, -b) not in poles else (a, -b)
        pole_of.append(poles.setdefault(key, len(poles)))
    first = [switch_of.index(i) for i in range(len(delays))]
    return np.array(switch_of, dtype=int), np.array(pole_of, dtype=int), first


def _merged(modes: "Modes") -> "Modes":
    """Modes with one delay, power, rate and frequency added into one (the same switching
    time written two ways, 7/100 and 0.07, gives two rows of one mode)."""
    keys: dict = {}
    for m in range(len(modes)):
        key = (modes.delay[m], int(modes.power[m]), modes.rate[m], modes.freq[m])
        if modes.exact:  # poles equal in floats but not exactly stay apart (nearly equal poles)
            key += (modes.exact[0][m], modes.exact[1][m], modes.exact[2][m])
        keys.setdefault(key, []).append(m)
    if len(keys) == len(modes):
        return modes
    rows = list(keys.values())
    pick = np.array([r[0] for r in rows])
    cos = np.array([modes.cos[r].sum() for r in rows])
    sin = np.array([modes.sin[r].sum() for r in rows])
    exact = ()
    if modes.exact:
        d, a, b, A, B = modes.exact
        exact = (tuple(d[r[0]] for r in rows), tuple(a[r[0]] for r in rows),
                 tuple(b[r[0]] for r in rows), tuple(sum(A[i] for i in r) for r in rows),
                 tuple(sum(B[i] for i in r) for r in rows))
    return Modes(modes.delay[pick], modes.power[pick], modes.rate[pick], modes.freq[pick],
                 cos, sin, exact)


# -- the numbers ----------------------------------------------------------------------------

class _no_context:
    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False


@dataclass(frozen=True, eq=False)
class Modes:
    """Numeric modes: arrays of delay c, power k, rate a, frequency b ≥ 0 and the cos and sin
    coefficients A, B. Callable on an array of times (NaN before t = 0)."""

    delay: np.ndarray
    power: np.ndarray
    rate: np.ndarray
    freq: np.ndarray
    cos: np.ndarray
    sin: np.ndarray
    exact: tuple = ()   # (delay, a, b, A, B) as mpmath numbers, for cancelling terms

    @staticmethod
    def empty() -> "Modes":
        z = np.zeros(0)
        return Modes(z, np.zeros(0, dtype=int), z, z, z, z, ())

    @classmethod
    def of(cls, expr: sp.Expr) -> "Modes":
        """The modes of an expression with numbers only."""
        return ModeTable(expr).at(())

    def __len__(self) -> int:
        return len(self.delay)

    @property
    def amplitude(self) -> np.ndarray:
        """√(A² + B²) of each mode: its size apart from τ^k e^{aτ}."""
        return np.hypot(self.cos, self.sin)

    @property
    def breakpoints(self) -> tuple[float, ...]:
        """The switching times after 0, in order."""
        return tuple(sorted({float(c) for c in self.delay if c > 0}))

    def _terms(self, t: np.ndarray, strict: bool = False) -> np.ndarray:
        """Each mode's value at each time (modes × times), zero where its step is off.

        Evaluated for all modes at once (broadcast), each at its own shifted time τ = t - c,
        with τ set to 0 where the step is off so that no factor is formed there.
        """
        tau = t[None, :] - self.delay[:, None]
        on = tau > 0 if strict else tau >= 0
        x = np.where(on, tau, 0.0)
        with np.errstate(over="ignore", invalid="ignore"):
            v = np.exp(self.rate[:, None] * x)
            if np.any(self.power):
                v = v * x ** self.power[:, None]
            w = self.freq[:, None] * x
            v = v * (self.cos[:, None] * np.cos(w) + self.sin[:, None] * np.sin(w))
        return np.where(on, v, 0.0)

    def __call__(self, times, strict: bool = False) -> np.ndarray:
        """y(times); ``strict`` gives the left limits (a mode switched on at t not yet on).

        Where the terms are far larger than their sum (nearly equal poles), the sum is
        re-formed in 40-digit arithmetic from the exact coefficients, so nearly equal time
        constants give the answer of exactly equal ones.
        """
        t = np.atleast_1d(np.asarray(times, dtype=float))
        if not len(self):
            return np.where(t >= 0, 0.0, np.nan)
        if not self.fragile:
            step = max(1, 2_000_000 // len(self))  # at most 2e6 mode-time values at once
            y = np.concatenate([self._terms(t[i:i + step], strict).sum(axis=0)
                                for i in range(0, t.size, step)]) if t.size else t.copy()
            return np.where(t >= 0, y, np.nan)
        terms = self._terms(t, strict)
        y = terms.sum(axis=0)
        with np.errstate(invalid="ignore"):
            size = np.abs(terms).sum(axis=0)
            bad = np.nonzero(np.isfinite(size) & (size > _CANCELLATION * np.abs(y))
                             & (size > 1e-300))[0]
        if bad.size and self.exact and self.fragile:
            y[bad] = [self._precise(t[i], strict) for i in bad]
        return np.where(t >= 0, y, np.nan)

    @cached_property
    def fragile(self) -> bool:
        """True when two modes of one switching time have distinct but nearly equal poles
        (closer than 1e-6 relative): their coefficients are then large and opposite, and a
        float sum loses digits to cancellation."""
        for c in set(self.delay.tolist()):
            idx = np.nonzero(self.delay == c)[0]
            p = self.rate[idx] + 1j * self.freq[idx]
            k = self.power[idx]
            for i in range(len(idx)):
                gap = np.abs(p - p[i])
                near = (gap <= 1e-6 * np.maximum(np.abs(p), np.abs(p[i]))) & (k == k[i])
                near[i] = False  # two modes of one power at (nearly) one pole: distinct poles
                if near.any():
                    return True
        return False

    def _precise(self, t: float, strict: bool) -> float:
        delay, a, b, ca, cb = self.exact
        with mpmath.workdps(40):
            total = size = mpmath.mpf(0)
            for m in range(len(self)):
                # the shifted time as the float evaluation forms it: a sample at a switching
                # time is exactly at the switch
                tau = mpmath.mpf(float(t) - float(self.delay[m]))
                if tau < 0 or (strict and tau == 0):
                    continue
                v = mpmath.exp(a[m] * tau) * tau ** int(self.power[m])
                term = v * (ca[m] * mpmath.cos(b[m] * tau) + cb[m] * mpmath.sin(b[m] * tau))
                total += term
                size += abs(term)
            # what is left of terms that cancel to 35 digits is rounding: the value is zero
            return 0.0 if abs(total) <= mpmath.mpf(10) ** -35 * size else float(mpmath.re(total))

    def derivative(self) -> "Modes":
        """The modes of dy/dt away from the switching times (jumps at a switch left out)."""
        rows = []
        for m in range(len(self)):
            c, k, a, b, A, B = (self.delay[m], int(self.power[m]), self.rate[m], self.freq[m],
                                self.cos[m], self.sin[m])
            if k:  # k τ^{k-1} e^{aτ}(A cos + B sin)
                rows.append((c, k - 1, a, b, k * A, k * B))
            # τ^k e^{aτ}((aA + bB) cos + (aB - bA) sin)
            rows.append((c, k, a, b, a * A + b * B, a * B - b * A))
        exact = ()
        if self.exact:
            d, ea, eb, eA, eB = self.exact
            cols = [[], [], [], [], []]
            for m in range(len(self)):
                k = int(self.power[m])
                if k:
                    for i, v in enumerate((d[m], ea[m], eb[m], k * eA[m], k * eB[m])):
                        cols[i].append(v)
                for i, v in enumerate((d[m], ea[m], eb[m], ea[m] * eA[m] + eb[m] * eB[m],
                                       ea[m] * eB[m] - eb[m] * eA[m])):
                    cols[i].append(v)
            exact = tuple(tuple(c) for c in cols)
        if not rows:
            return Modes.empty()
        cols = list(zip(*rows))
        return _merged(Modes(np.array(cols[0], float), np.array(cols[1], int),
                             np.array(cols[2], float), np.array(cols[3], float),
                             np.array(cols[4], float), np.array(cols[5], float), exact))

    def scaled(self, factor: float) -> "Modes":
        """factor·y."""
        exact = ()
        if self.exact:
            d, a, b, A, B = self.exact
            exact = (d, a, b, tuple(factor * x for x in A), tuple(factor * x for x in B))
        return Modes(self.delay, self.power, self.rate, self.freq, factor * self.cos,
                     factor * self.sin, exact)

    # -- what the modes say about t → ∞ --------------------------------------------------
    def scale(self) -> float:
        """A size for relative thresholds: the largest amplitude."""
        return float(np.max(self.amplitude)) if len(self) else 0.0

    def present(self) -> np.ndarray:
        """Modes with a non-zero amplitude. Only what is below 50-digit rounding of the largest
        is taken as absent: nearly equal poles give terms of 10^15 beside a result of 1, and
        the small terms then still count."""
        amp = self.amplitude
        return amp > 1e-40 * max(self.scale(), 1e-300)

    def rate_scale(self) -> float:
        vals = np.concatenate([np.abs(self.rate), self.freq, [1.0]])
        return float(np.max(vals))

    def is_steady(self) -> np.ndarray:
        """Modes with no decay and no growth (a = 0 up to rounding)."""
        return np.abs(self.rate) <= 1e-11 * self.rate_scale()

    def classify(self):
        """(growing, steady, decaying) boolean masks over the present modes.

        Growing: a > 0, or a = 0 with k ≥ 1 (t^k growth). Steady: a = 0, k = 0 (a constant
        or an undamped oscillation). Decaying: a < 0.
        """
        on = self.present()
        steady_rate = self.is_steady()
        growing = on & ((~steady_rate & (self.rate > 0)) | (steady_rate & (self.power > 0)))
        steady = on & steady_rate & (self.power == 0)
        decaying = on & ~steady_rate & (self.rate < 0)
        return growing, steady, decaying

    def tail_bound(self, t0: float, decaying: np.ndarray) -> float:
        """An upper bound of |Σ decaying modes| for every t ≥ t0 (t0 past every switch on)."""
        total = 0.0
        for m in np.nonzero(decaying)[0]:
            tau = max(t0 - self.delay[m], 0.0)
            k, a = int(self.power[m]), float(self.rate[m])
            peak_at = k / -a  # τ^k e^{aτ} rises up to τ = k/|a|, then falls
            x = max(tau, peak_at)
            total += self.amplitude[m] * (x ** k if k else 1.0) * math.exp(a * x)
        return total

    def tail(self) -> "Modes":
        """The same response after its last switching time L, as modes in t - L, with the
        modes of equal (k, a, b) added (in 40-digit arithmetic where the exact coefficients
        are known). Terms that cancel there vanish: t·u(t) - (t - 1)·u(t - 1) is the constant 1
        for t ≥ 1, not two growing ramps. Found once per Modes (they are immutable)."""
        return self._tail

    @cached_property
    def _tail(self) -> "Modes":
        if not len(self):
            return self
        last = float(np.max(self.delay))
        use_exact = bool(self.exact)
        ctx = mpmath.workdps(40) if use_exact else _no_context()
        rows: dict = {}
        keys: list = []
        with ctx:
            for m in range(len(self)):
                if use_exact:
                    c, a, b, A, B = (col[m] for col in self.exact)
                    d = mpmath.mpf(last) - c
                    ea, cb, sb = mpmath.exp(a * d), mpmath.cos(b * d), mpmath.sin(b * d)
                else:
                    c, a, b, A, B = (self.delay[m], self.rate[m], self.freq[m], self.cos[m],
                                     self.sin[m])
                    d = last - c
                    ea, cb, sb = math.exp(a * d), math.cos(b * d), math.sin(b * d)
                A1, B1 = A * cb + B * sb, B * cb - A * sb
                k = int(self.power[m])
                key_ab = self._key(float(self.rate[m]), float(self.freq[m]), keys)
                for j in range(k + 1):
                    w = math.comb(k, j) * d ** (k - j) * ea
                    key = (j,) + key_ab
                    old = rows.get(key)
                    a_m, b_m = (a, b)
                    part = (w * A1, w * B1, abs(w * A1) + abs(w * B1))
                    rows[key] = part + (a_m, b_m) if old is None else (
                        old[0] + part[0], old[1] + part[1], old[2] + part[2], old[3], old[4])
            kept = []
            for (j, _, _), (A, B, size, a, b) in rows.items():
                floor = (mpmath.mpf(10) ** -30 if use_exact else 1e-13) * size
                if abs(A) <= floor and abs(B) <= floor:
                    continue  # cancelled to rounding
                kept.append((j, a, b, A if abs(A) > floor else 0 * A, B if abs(B) > floor else 0 * B))
        if not kept:
            return Modes.empty()
        n = len(kept)
        exact = ()
        if use_exact:
            exact = (tuple(mpmath.mpf(last) for _ in range(n)), tuple(r[1] for r in kept),
                     tuple(r[2] for r in kept), tuple(r[3] for r in kept),
                     tuple(r[4] for r in kept))
        fl = lambda x: float(mpmath.re(x)) if use_exact else float(x)  # noqa: E731
        return Modes(np.full(n, last), np.array([r[0] for r in kept], dtype=int),
                     np.array([fl(r[1]) for r in kept]), np.array([fl(r[2]) for r in kept]),
                     np.array([fl(r[3]) for r in kept]), np.array([fl(r[4]) for r in kept]),
                     exact)

    @staticmethod
    def _key(a: float, b: float, keys: list) -> tuple:
        """The key of a pole: modes of different switching times share a pole exactly (the same
        expression, the same float); nearly equal poles stay apart, since their large, opposite
        coefficients only cancel with their own rates."""
        return (a, b)

    def subset(self, mask) -> "Modes":
        idx = np.nonzero(mask)[0]
        exact = tuple(tuple(col[i] for i in idx) for col in self.exact) if self.exact else ()
        return Modes(self.delay[idx], self.power[idx], self.rate[idx], self.freq[idx],
                     self.cos[idx], self.sin[idx], exact)
