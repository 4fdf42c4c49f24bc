"""Stand-ins for the design solve that are slow or fail on purpose (bookkeeping tests, not physics).

The workers are spawned processes, so the knobs are environment variables (inherited)
or ``functools.partial`` arguments (pickled).
"""

from __future__ import annotations

import os
import time

from tests.verify.synthetic import rod_task

#: Seconds each solve sleeps before returning (so a kill lands mid-work).
SLEEP_ENV = "RELIABILITY_TASK_SLEEP_S"


def slow_rod_task(spec, params):
    """:func:`tests.verify.synthetic.rod_task` after sleeping ``$RELIABILITY_TASK_SLEEP_S`` seconds."""
    time.sleep(float(os.environ.get(SLEEP_ENV, "0")))
    return rod_task(spec, params)


def raise_above_width(width_nm, spec, params):
    """Raise for designs wider than ``width_nm`` (bind it with ``functools.partial``)."""
    if params["width_nm"] > width_nm:
        raise RuntimeError(f"synthetic solver breakdown at width_nm={params['width_nm']:g}")
    return rod_task(spec, params)
