"""``surrogate generate`` with the solve replaced by a paced synthetic stand-in, for subprocess tests.

Usage: ``python -m tests.reliability.generate_driver CAMPAIGN.toml [generate options]``

This is the real command line (``surrogate.cli.main(["generate", ...])``): it opens the store,
logs the run, spawns its worker processes and commits every result.  Only the solve differs:
``surrogate.campaign._task.evaluate_design``, which ``generate`` looks up when it runs, is replaced
by :func:`paced_rod_task`, and the worker processes receive that function by reference (a
monkeypatch in the test process would not reach this subprocess, hence the driver).
"""

from __future__ import annotations

import os
import sys
import time

from tests.verify.synthetic import rod_task

#: Seconds each solve sleeps while the release file does not exist.
PACE_ENV = "CONCURRENCY_TASK_SLEEP_S"
#: Once this file exists the solves stop sleeping, so the run finishes quickly.
RELEASE_ENV = "CONCURRENCY_RELEASE_FILE"


def paced_rod_task(spec, params):
    """:func:`tests.verify.synthetic.rod_task` after ``$CONCURRENCY_TASK_SLEEP_S`` seconds.

    The runner then commits one design about every that many seconds, for as long as the test
    needs, and quickly once the test creates ``$CONCURRENCY_RELEASE_FILE``.
    """
    release = os.environ.get(RELEASE_ENV)
    if not (release and os.path.exists(release)):
        time.sleep(float(os.environ.get(PACE_ENV, "0")))
    return rod_task(spec, params)


def main(argv):
    from surrogate.campaign import _task
    from surrogate.cli import main as cli_main

    # by module name, not this __main__: the spawned workers unpickle it from tests.reliability
    from tests.reliability.generate_driver import paced_rod_task as task

    _task.evaluate_design = task
    return cli_main(["generate", *argv])


if __name__ == "__main__":  # the runner's workers are spawned and import this module again
    sys.exit(main(sys.argv[1:]))
