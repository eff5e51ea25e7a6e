"""Reading user input: text, numbers, units, loads and matrices into a checked Problem."""
