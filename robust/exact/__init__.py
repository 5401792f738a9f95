"""The exact core: numbers, polynomials, the Routh array, Hurwitz determinants, interval polynomials."""
