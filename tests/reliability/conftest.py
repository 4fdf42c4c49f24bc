# the trained, searched synthetic rod store of the verification tests (copied per test before writing)
from tests.verify.conftest import FAST_TRAINING, searched_store, store_copy  # noqa: F401
