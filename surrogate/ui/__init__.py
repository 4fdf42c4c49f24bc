"""Page functions for ``app.py`` (the app file only routes).

* :mod:`._data`      cached reads of a store (frames by fingerprint, models as resources)
* :mod:`._common`    the store chooser and the helpful states
* :mod:`._jobs`      background jobs (retrain, verify) in threads
* :mod:`._figures`   plotly figures of one design
* :mod:`._front`, :mod:`._detail`, :mod:`._training`, :mod:`._models`, :mod:`._queue`   the pages
"""

from ._data import STORE_ENV
from ._front import front_page
from ._models import models_page
from ._queue import queue_page
from ._training import training_page

__all__ = ["front_page", "training_page", "models_page", "queue_page", "STORE_ENV"]
