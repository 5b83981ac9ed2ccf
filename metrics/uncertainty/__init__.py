"""How sure a figure is: ballot bootstrap, each metric's interval, label-permutation nulls."""
