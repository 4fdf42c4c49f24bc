"""Training-set campaigns: campaign files, space-filling designs, runners and the crash-safe store."""

from ._design import design_id, sample_designs
from ._runner import RunSummary, run_campaign
from ._spec import ADDED_SPEC_DEFAULTS, CampaignFileError, CampaignSpec, load_campaign, parse_campaign
from ._store import SCHEMA_VERSION, QueueState, Source, Status, Store, StoreError

__all__ = [
    "Store",
    "Status",
    "QueueState",
    "Source",
    "StoreError",
    "SCHEMA_VERSION",
    "CampaignSpec",
    "CampaignFileError",
    "ADDED_SPEC_DEFAULTS",
    "load_campaign",
    "parse_campaign",
    "sample_designs",
    "design_id",
    "run_campaign",
    "RunSummary",
]
