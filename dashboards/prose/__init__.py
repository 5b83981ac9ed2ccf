"""Words from numbers: labels, typeset numbers, verdict and headline, fixed texts, tables."""
