"""Hardware March BIST: a microcoded Verilog engine for a March test (``plan_engine`` ->
``engine_verilog``), its contract adapter, self-checking testbenches, proof against the Python
stream in Icarus (``verify_engine``, ``run_units``) and lint/synthesis checks (``lint_file``).

Generating needs nothing but Python; verifying needs Icarus Verilog, linting Verilator and Yosys.
Never imports cocotb.
"""

from memcheck.bist.adapter import adapter_verilog, choose_port
from memcheck.bist.lint import LintReport, lint_file
from memcheck.bist.microcode import EnginePlan, RomWord, plan_engine
from memcheck.bist.testbench import TbUnit, testbench_verilog
from memcheck.bist.verify import UnitResult, VerifyResult, run_on_wrapper, run_units, verify_engine
from memcheck.bist.verilog import engine_verilog

__all__ = [
    "EnginePlan",
    "LintReport",
    "RomWord",
    "TbUnit",
    "UnitResult",
    "VerifyResult",
    "adapter_verilog",
    "choose_port",
    "engine_verilog",
    "lint_file",
    "plan_engine",
    "run_on_wrapper",
    "run_units",
    "testbench_verilog",
    "verify_engine",
]
