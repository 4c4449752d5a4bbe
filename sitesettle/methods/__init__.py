"""Published settlement models, one module each, as pure vectorised functions."""
