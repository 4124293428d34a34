"""The jobs on RTL, each a thin layer on :mod:`memcheck.sim.session`: check and replay, march run."""
