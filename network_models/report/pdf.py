"""The review report as PDF, printed by a headless Chromium when one is installed (A4, from the report's print
style).  Used by ``netstretch report --pdf`` and by the app's Compare tab (which offers the PDF only where
:func:`find_chromium` finds a browser).  No network: the report is self-contained and read from a local file.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

from ..errors import UserError

#: seconds Chromium may take to print one report
PDF_TIMEOUT = 120


def find_chromium() -> str | None:
    """The Chromium to print with: ``NETSTRETCH_CHROMIUM``, else ``chromium``/``chromium-browser`` on PATH."""
    return os.environ.get("NETSTRETCH_CHROMIUM") or shutil.which("chromium") or shutil.which("chromium-browser")


def print_pdf(html_path, pdf_path=None, how: str = "") -> Path:
    """``pdf_path`` (default: the HTML's name with .pdf) printed from the HTML file; :class:`UserError` with a
    sentence (ending in ``how``, what to do instead) when there is no Chromium or it fails."""
    html_path = Path(html_path)
    pdf = Path(pdf_path) if pdf_path is not None else html_path.with_suffix(".pdf")
    how = how or "open the HTML in a browser and print it to PDF (A4 portrait); the report has a print layout"
    exe = find_chromium()
    if not exe:
        raise UserError("printing a PDF needs a headless Chromium (install the 'chromium' package or set "
                        f"NETSTRETCH_CHROMIUM); {how}")
    cmd = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-background-networking",
           "--no-pdf-header-footer", f"--print-to-pdf={pdf}", html_path.resolve().as_uri()]
    try:
        subprocess.run(cmd, check=True, capture_output=True, timeout=PDF_TIMEOUT)
    except (OSError, subprocess.SubprocessError) as exc:
        raise UserError(f"Chromium could not print the PDF ({type(exc).__name__}); {how}") from None
    if not pdf.exists():
        raise UserError(f"Chromium wrote no PDF; {how}")
    return pdf


def pdf_bytes(html_text: str, how: str = "") -> bytes:
    """The PDF of a report given as HTML text (printed in a temporary folder that is removed afterwards)."""
    with tempfile.TemporaryDirectory(prefix="netstretch-pdf-") as tmp:
        src = Path(tmp) / "report.html"
        src.write_text(html_text, "utf-8")
        return print_pdf(src, Path(tmp) / "report.pdf", how).read_bytes()


__all__ = ["PDF_TIMEOUT", "find_chromium", "pdf_bytes", "print_pdf"]
