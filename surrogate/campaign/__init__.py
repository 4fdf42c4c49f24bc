"""Training-set campaigns: designs, runners and the crash-safe store."""

from ._store import SCHEMA_VERSION, Source, Status, Store, StoreError

__all__ = ["Store", "Status", "Source", "StoreError", "SCHEMA_VERSION"]
