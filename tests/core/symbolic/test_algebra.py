"""core/symbolic/algebra.py: poles of a polynomial and the fraction-free solve, against SymPy's
roots, numpy.roots and SymPy's determinant and adjugate."""

import numpy as np
import sympy as sp

from derivpad.core.model.symbols import S
from derivpad.core.symbolic.algebra import poles_of
from derivpad.core.symbolic.stages import determinant_and_adjugate


def _as_complex(poleset):
    out = []
    for p in poleset.poles:
        for _ in range(p.multiplicity):
            if p.kind == "real":
                out.append(complex(p.value))
            else:
                out += [complex(p.alpha, p.beta), complex(p.alpha, -p.beta)]
    return sorted(out, key=lambda z: (z.real, z.imag))


def test_real_and_complex_poles_against_sympy_roots():
    poly = sp.expand((S + 1) * (S ** 2 + 4 * S + 13))
    ours = _as_complex(poles_of(poly))
    ref = sorted((complex(r) for r, m in sp.roots(poly, S).items() for _ in range(m)),
                 key=lambda z: (z.real, z.imag))  # SymPy roots as reference
    assert np.allclose(ours, ref, rtol=0, atol=1e-15)
    assert not poles_of(poly).numeric  # exact: -1 and -2 ± 3i


def test_a_repeated_pole_keeps_its_multiplicity():
    ps = poles_of(sp.expand(2 * (S + 2) ** 3 * S))
    assert {(p.kind, p.value, p.multiplicity) for p in ps.poles} == {("real", -2, 3),
                                                                      ("real", 0, 1)}
    assert ps.leading == 2


def test_an_irreducible_quintic_gets_numeric_poles_against_numpy_roots():
    poly = S ** 5 + S + 1 - (S ** 2 + S + 1) * 0 + 3
    ps = poles_of(sp.expand(poly))
    assert ps.numeric
    ref = np.sort_complex(np.roots([1, 0, 0, 0, 1, 4]))  # numpy.roots as reference
    assert np.allclose(np.sort_complex(np.array(_as_complex(ps))), ref, rtol=0, atol=1e-12)


def test_determinant_and_adjugate_against_sympy():
    A = sp.Matrix([[2 * S ** 2 + 1000, -200, 0], [-200, S ** 2 + 4 * S + 400, -200],
                   [0, -200, 3 * S ** 2 + 200]])
    det, adj = determinant_and_adjugate(A)
    assert sp.expand(det - A.det()) == 0          # SymPy's det as reference
    assert (adj - A.adjugate()).applyfunc(sp.expand) == sp.zeros(3, 3)
    assert (A * adj).applyfunc(sp.expand) == sp.expand(det) * sp.eye(3)
