"""The mathematical core, in folders that read in the order data flows.

``model`` (the value objects) ← ``reading`` (user input → a checked Problem) ← ``symbolic`` (the
derivation's stages by the engine's rule table) ← ``checking`` (the derivation compiled for
numbers, its checks, its engineering results) ← ``engine.py`` and ``family.py`` on top. Each
folder imports only the ones before it. Nothing here imports rendering, Jupyter or matplotlib
at load: the display methods reach ``derivpad.render`` through ``model/display_hook.py`` only.
"""
