"""Checking logic run inside the simulator that needs no simulator: phases, fixed sequences,
examples, comparison with the model, shrinking, the March schedule and the March job."""
