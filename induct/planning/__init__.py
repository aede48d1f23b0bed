"""Mission planning studies: feasibility maps, amplitude-phase diagrams, separation, flyby design."""
