"""Reference expansions for tests/unit/models/entry.test.ts.

Run with Debian's python3-sympy (1.11): /usr/bin/python3 expansions.py > expansions.json
Each case is a transfer function as typed on the publish page, with its numerator and denominator
written out for sympy (numerals as exact rationals: sympify(..., rational=True)). sympy's expand()
gives the exact coefficients; float() of a sympy Rational is the correctly rounded double, so the
JSON holds the double nearest to each exact coefficient, highest power first. "naive" holds the
coefficients expanded in binary floating point (what rounding at every step gives), to show where
exact expansion matters.
"""
import json
import sympy as sp
from sympy.parsing.sympy_parser import (convert_xor, implicit_multiplication_application, parse_expr,
                                        rationalize, standard_transformations)

s = sp.Symbol('s')

# typed text, numerator for sympy, denominator for sympy (sums of fractions already over the least
# common denominator, as the rule in src/lib/models/entry/expression.ts says)
CASES = [
    ('66/((s+1.1)(s+3.5)(s+9))', '66', '(s+1.1)*(s+3.5)*(s+9)'),
    ('(s+2)/(s^2+0.4s+4)', 's+2', 's**2+0.4*s+4'),
    ('(0.3s+1)(s+0.7)/((s+0.1)(s^2+0.2s+1.7)(s+12.5))', '(0.3*s+1)*(s+0.7)', '(s+0.1)*(s**2+0.2*s+1.7)*(s+12.5)'),
    ('1/(s+1)+2/(s+3)', '(s+3)+2*(s+1)', '(s+1)*(s+3)'),
    ('s(s+1)/(s+2)^3', 's*(s+1)', '(s+2)**3'),
    ('1e-3(s+1000)/(s(s+0.01))', '1e-3*(s+1000)', 's*(s+0.01)'),
    ('(s^2+2*0.05*3s+9)/(s^2+2*0.001*3s+9)^2', 's**2+2*0.05*3*s+9', '(s**2+2*0.001*3*s+9)**2'),
    ('(s/3+1)/(s+1)', 's+3', '3*(s+1)'),
    ('2.5/(s+1.1)^5', '2.5', '(s+1.1)**5'),
    ('(s-0.7)(s+0.3)/((s+0.9)(s+1.3)(s+2.1)(s+4.7))', '(s-0.7)*(s+0.3)', '(s+0.9)*(s+1.3)*(s+2.1)*(s+4.7)'),
]


def coeffs(text):
    e = sp.expand(sp.sympify(text, rational=True))
    return [float(c) for c in sp.Poly(e, s).all_coeffs()]


out = []
for typed, num, den in CASES:
    # Cross-check that the written-out ratio equals the typed expression (sympy's implicit
    # multiplication parser reads "(s+1.1)(s+3.5)" as a product).
    typed_expr = parse_expr(typed, local_dict={'s': s}, transformations=standard_transformations
                            + (implicit_multiplication_application, convert_xor, rationalize))
    ratio = sp.sympify(num, rational=True) / sp.sympify(den, rational=True)
    assert sp.simplify(typed_expr - ratio) == 0, typed
    out.append({'typed': typed, 'num': coeffs(num), 'den': coeffs(den)})

print(json.dumps({'source': 'sympy ' + sp.__version__ + ' expand(), tests/unit/models/reference/expansions.py', 'cases': out}, indent=1))
