"""The design-review report: one self-contained HTML file, with CSV and JSON beside it holding every number.

    >>> from network_models.report import Report
    >>> rep = Report(comparison, title="Cure-dose ladder", purpose="Choose the cure dose for the seal")
    >>> paths = rep.write("review.html")   # also review.csv and review.json
    >>> rep.to_html(), rep.to_csv(), rep.to_json()

Layout: :mod:`.html` (the page and its sections), :mod:`.sections` (summary, specimens, uncertainty),
:mod:`.charts` (self-contained SVG, inline styles), :mod:`.tables` (CSV and JSON rows), :mod:`.text`
(number formatting).
"""

from .charts import PALETTE, nice_ticks, specimen_plot, svg_bar_chart, svg_line_chart
from .html import CAUTIONS, CSS, TABLE_KEYS, Report, build_report
from .tables import CSV_FIELDS, read_csv
from .text import fmt

__all__ = ["CAUTIONS", "CSS", "CSV_FIELDS", "PALETTE", "TABLE_KEYS", "Report", "build_report", "fmt", "nice_ticks",
           "read_csv", "specimen_plot", "svg_bar_chart", "svg_line_chart"]
