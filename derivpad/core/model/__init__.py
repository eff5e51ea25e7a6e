"""Value objects: the problem, steps, labels, checks, results and the derivation itself."""
