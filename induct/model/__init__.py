"""The forward model: the layered-sphere kernel, the checked response API, interiors, parameters, oceans."""
