"""Figures (PNG) and the campaign report (HTML).  An I/O edge: writes files, never prints."""

from ._campaign_report import CAUTIONS, SECTIONS, ReportOutcome, report_folder, write_campaign_report
from ._figures import draw_field_map, draw_outline, draw_sites, draw_spectrum
from ._gather import CampaignRecord, read_campaign

__all__ = [
    "draw_sites",
    "draw_field_map",
    "draw_spectrum",
    "draw_outline",
    "CampaignRecord",
    "read_campaign",
    "ReportOutcome",
    "SECTIONS",
    "CAUTIONS",
    "report_folder",
    "write_campaign_report",
]
