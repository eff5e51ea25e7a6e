"""The symbolic stages: transform, solve, partial fractions, invert, assemble, by rule."""
