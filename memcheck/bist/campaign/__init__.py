"""Fault coverage measured on RTL: the generated BIST engine against faulty memory copies, compared
instance by instance with the fast fault simulator (see docs/bist.md, "Measuring coverage on RTL").

Needs Icarus Verilog or Verilator to run; Dask only for ``scheduler=``. Never imports cocotb.
"""

from memcheck.bist.campaign.report import CampaignReport, render
from memcheck.bist.campaign.runner import CampaignSpec, execute, prepare, run_campaign

__all__ = ["CampaignReport", "CampaignSpec", "execute", "prepare", "render", "run_campaign"]
