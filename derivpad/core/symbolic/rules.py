"""The rule table: every transform pair and theorem the engine uses, with its published source.

Adding a pair is one entry here (see DEVELOPERS.md). Each entry has a reference test in
``tests/core/test_rules.py`` that checks the pair against SymPy's ``laplace_transform`` and
against numerical integration of the Laplace integral with mpmath.
"""

from __future__ import annotations

from ..model.steps import Rule

__all__ = ["RULES", "rule"]

_AS = "Abramowitz & Stegun, Handbook of Mathematical Functions (NBS AMS 55, 1964)"
# Entry numbers checked against the scanned pages 1021-1023 of the NBS edition (the National
# Institute of Standards and Technology's public scan); §29.2's first page (1020) was not at
# hand, so linearity, the derivative and multiplication by t stay "from memory".
_AS_OPS = _AS + ", §29.2 (operations), from memory"


def _as(entry: str, note: str = "") -> str:
    return f"{_AS}, {entry}" + (f" ({note})" if note else "")


_DLMF = "NIST DLMF §1.14(iii) (Laplace transform), from memory"
_KREYSZIG = "E. Kreyszig, Advanced Engineering Mathematics, ch. 6 (Laplace transforms), from memory"
_LMT = ("K. H. Lundberg, H. R. Miller, D. L. Trumper, 'Initial conditions, generalized functions, "
        "and the Laplace transform', IEEE Control Systems Magazine 27(1), 2007, from memory")

_ENTRIES = [
    Rule("definition", "Laplace transform (0⁻ form)",
         r"\mathcal{L}\{f\}(s) = \int_{0^-}^{\infty} f(t)\,e^{-st}\,dt",
         "f of exponential order; the lower limit 0⁻ takes in an impulse at t = 0", _LMT),
    Rule("linearity", "Linearity",
         r"\mathcal{L}\{a f(t) + b g(t)\} = a F(s) + b G(s)", "a, b constants", _AS_OPS),
    Rule("derivative", "Transform of a derivative",
         r"\mathcal{L}\{f^{(n)}(t)\} = s^{n} F(s) - \sum_{k=0}^{n-1} s^{n-1-k} f^{(k)}(0^-)",
         "f, ..., f^(n-1) of exponential order; initial values taken at 0⁻", _AS_OPS + "; " + _LMT),
    Rule("first_shift", "First shifting theorem (s-shift)",
         r"\mathcal{L}\{e^{a t} f(t)\} = F(s - a)", "Re s > Re a + abscissa of f",
         _as("29.2.12")),
    Rule("second_shift", "Second shifting theorem (t-shift)",
         r"\mathcal{L}\{f(t - c)\,u(t - c)\} = e^{-c s} F(s)", "c ≥ 0", _as("29.2.13")),
    Rule("times_t", "Multiplication by a power of t",
         r"\mathcal{L}\{t^{n} f(t)\} = (-1)^{n} \frac{d^{n}F}{ds^{n}}", "n = 1, 2, ...", _AS_OPS),
    Rule("pair_step", "Unit step", r"\mathcal{L}\{u(t)\} = \frac{1}{s}", "Re s > 0",
         _as("29.3.3", "n = 1")),
    Rule("pair_delta", "Dirac impulse",
         r"\mathcal{L}\{\delta(t - c)\} = e^{-c s}", "c ≥ 0 (an impulse at 0 acts after 0⁻)", _LMT),
    Rule("pair_power", "Power of t", r"\mathcal{L}\{t^{n}\} = \frac{n!}{s^{n+1}}",
         "n = 0, 1, 2, ...; Re s > 0", _as("29.3.3", "n + 1 for n")),
    Rule("pair_exp", "Exponential", r"\mathcal{L}\{e^{a t}\} = \frac{1}{s - a}", "Re s > Re a",
         _as("29.3.8", "−a for a")),
    Rule("pair_power_exp", "Power of t times an exponential",
         r"\mathcal{L}\{t^{n} e^{a t}\} = \frac{n!}{(s - a)^{n+1}}", "Re s > Re a",
         _as("29.3.10", "n + 1 for n, −a for a")),
    Rule("pair_sin", "Sine", r"\mathcal{L}\{\sin b t\} = \frac{b}{s^{2} + b^{2}}", "Re s > 0",
         _as("29.3.15", "times b, with b for a")),
    Rule("pair_cos", "Cosine", r"\mathcal{L}\{\cos b t\} = \frac{s}{s^{2} + b^{2}}", "Re s > 0",
         _as("29.3.16", "b for a")),
    Rule("pair_exp_sin", "Damped sine",
         r"\mathcal{L}\{e^{a t}\sin b t\} = \frac{b}{(s - a)^{2} + b^{2}}", "Re s > a",
         _as("29.3.26", "times b, −a for a")),
    Rule("pair_exp_cos", "Damped cosine",
         r"\mathcal{L}\{e^{a t}\cos b t\} = \frac{s - a}{(s - a)^{2} + b^{2}}", "Re s > a",
         _as("29.3.27", "−a for a")),
    Rule("pair_power_trig", "Power of t times a damped sinusoid",
         r"\mathcal{L}\{t^{n} e^{a t} e^{\pm i b t}\} = \frac{n!}{(s - a \mp i b)^{n+1}}"
         r"\ \Rightarrow\ \mathcal{L}\{t^{n} e^{a t}\cos b t\} = \operatorname{Re}\frac{n!}{(s-a-ib)^{n+1}},"
         r"\ \mathcal{L}\{t^{n} e^{a t}\sin b t\} = \operatorname{Im}\frac{n!}{(s-a-ib)^{n+1}}",
         "real s > a; real and imaginary parts taken with s real",
         _as("29.3.10", "n + 1 for n, −(a ± ib) for a") + "; " + _DLMF),
    Rule("piecewise_to_step", "Piecewise function in unit-step form",
         r"f(t) = f_1(t) + \sum_{i} \bigl(f_{i+1}(t) - f_i(t)\bigr)\,u(t - t_i)",
         "f = f_i on t_{i-1} < t < t_i", _KREYSZIG),
    Rule("solve_algebraic", "Algebraic solution for the transform",
         r"A(s)\,Y(s) = B(s) \;\Rightarrow\; Y(s) = \frac{B(s)}{A(s)}",
         "A(s) not identically zero; for systems, Cramer's rule Y_i = det A_i / det A", _KREYSZIG),
    Rule("pf_simple", "Partial fractions: simple pole (cover-up)",
         r"\frac{N(s)}{D(s)} \ni \frac{A}{s - p},\quad A = \left.\frac{N(s)}{D'(s)}\right|_{s=p}",
         "p a simple root of D; N/D proper", _KREYSZIG),
    Rule("pf_repeated", "Partial fractions: repeated pole",
         r"\frac{N(s)}{D(s)} \ni \sum_{k=1}^{m}\frac{A_k}{(s - p)^{k}},\quad "
         r"A_k = \frac{1}{(m-k)!}\left.\frac{d^{m-k}}{ds^{m-k}}\left[(s-p)^{m}\frac{N(s)}{D(s)}\right]\right|_{s=p}",
         "p a root of D of multiplicity m", _KREYSZIG),
    Rule("pf_complex_pair", "Partial fractions: complex-conjugate pair, square completed",
         r"\frac{A}{s - p} + \frac{\bar A}{s - \bar p} = "
         r"\frac{2\operatorname{Re}A\,(s - \alpha) - 2\operatorname{Im}A\,\beta}{(s - \alpha)^{2} + \beta^{2}},"
         r"\quad p = \alpha + i\beta",
         "N, D real; β > 0", _KREYSZIG),
    Rule("numeric_roots", "Numerical roots of a polynomial",
         r"D(s) = a_n \prod_j (s - p_j),\ p_j \text{ by simultaneous iteration to 50 digits}",
         "no closed-form factor over the rationals of degree ≤ 2",
         "mpmath.polyroots (Durand–Kerner), mpmath documentation"),
]

RULES: dict[str, Rule] = {entry.id: entry for entry in _ENTRIES}
"""Every rule by id."""


def rule(rule_id: str) -> Rule:
    """The rule with this id (a KeyError here is a programming error, not user input)."""
    return RULES[rule_id]
