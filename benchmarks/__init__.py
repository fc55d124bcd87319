"""netstretch benchmarks: speed and accuracy of the core, the fitter and the app.

Run ``python -m benchmarks`` (full, writes ``benchmarks/results/latest.json``) or
``python -m benchmarks --quick --json`` (under a minute; the last output line is one JSON document).

Every speed figure is a ratio against a baseline run in the same process, with the absolute times and
the machine beside it.  A figure that cannot be measured (a part not built yet, no browser) is ``null``
with a sentence in ``notes`` saying why; no number is ever made up.
"""

from .common import machine_info, median_time

__all__ = ["machine_info", "median_time"]
