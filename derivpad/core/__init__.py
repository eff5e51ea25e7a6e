"""The mathematical core: parsing, transforms, algebra, partial fractions, inversion, checks.

Nothing here imports rendering, Jupyter or matplotlib; the derivation's display methods
import ``derivpad.render`` lazily, inside their bodies.
"""
