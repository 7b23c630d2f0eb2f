"""GF(2^m) helpers against galois."""
from __future__ import annotations

import galois
import pytest

from bitmend import gf


@pytest.mark.parametrize("m", sorted(gf.DEFAULT_PRIMITIVE))
def test_default_polynomials_primitive_per_galois(m):
    # galois.Poly.is_primitive: an outside check of the textbook table (written from memory)
    poly = gf.DEFAULT_PRIMITIVE[m]
    assert gf.is_primitive(poly, m)
    assert galois.Poly.Int(poly).is_primitive()


@pytest.mark.parametrize("poly,m,want", [(0x11D, 8, True), (0x11B, 8, False), (0x187, 8, True),
                                         (0b10101, 4, False), (0b11001, 4, True)])
def test_is_primitive_agrees_with_galois(poly, m, want):
    assert gf.is_primitive(poly, m) is want
    assert galois.Poly.Int(poly).is_primitive() is want


def test_field_arithmetic_matches_galois():
    f = gf.Field(8, 0x11D)
    GF = galois.GF(2**8, irreducible_poly=galois.Poly.Int(0x11D))
    for a in range(0, 256, 7):
        for b in range(1, 256, 13):
            assert f.mul(a, b) == int(GF(a) * GF(b))
            assert f.div(a, b) == int(GF(a) / GF(b))


def test_minimal_polynomials_match_galois():
    f = gf.Field(6, gf.DEFAULT_PRIMITIVE[6])
    GF = galois.GF(2**6, irreducible_poly=galois.Poly.Int(gf.DEFAULT_PRIMITIVE[6]))
    alpha = GF.primitive_element
    assert int(alpha) == 2
    for i in (1, 3, 5, 7, 9, 21):
        assert f.minimal_polynomial(i) == int((alpha ** i).minimal_poly())


def test_non_primitive_rejected():
    with pytest.raises(ValueError):
        gf.Field(8, 0x11B)


@pytest.mark.parametrize("m,poly", [(6, 0x43), (7, 0x89)])
def test_quadratic_solver_against_galois(m, poly):
    # y^2 + y = c has a solution exactly when the absolute trace of c is 0 (galois field_trace); the
    # solver's y must satisfy the equation in galois's arithmetic.
    f = gf.Field(m, poly)
    GF = galois.GF(2**m, irreducible_poly=galois.Poly.Int(poly))
    rows = f.quadratic_solver()
    assert len(rows) == m - 1
    solvable = 0
    for c in range(1 << m):
        y, rest = 0, c
        for bit, image, pre in rows:
            if rest & bit:
                rest ^= image
                y ^= pre
        assert (rest == 0) == (int(GF(c).field_trace()) == 0), c
        if rest == 0:
            solvable += 1
            assert GF(y) ** 2 + GF(y) == GF(c), c
    assert solvable == 1 << (m - 1)
