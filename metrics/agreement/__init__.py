"""How members and groups agree: kappa, scored agreement, Krippendorff's alpha, cohesion."""
