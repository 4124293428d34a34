"""Simulator plumbing: build, pins, harness and its bit layout, simulator launch and watchdog, and
the cocotb entry module (the only cocotb importers of memcheck)."""
