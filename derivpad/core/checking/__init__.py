"""Checking: the derivation compiled for numbers, its checks and its engineering results."""
