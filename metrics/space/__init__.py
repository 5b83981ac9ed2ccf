"""Members as points: ideal points, scaling, positions on a line, how groups separate."""
