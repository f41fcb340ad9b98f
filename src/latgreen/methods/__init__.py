"""Independent numerical methods (quadrature, asymptotic expansions)."""
