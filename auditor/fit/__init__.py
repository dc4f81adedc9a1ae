"""Independent least squares: solving, inference, influence."""
