"""The report prints to PDF from a browser with page numbers (CSS @page margin boxes).

Checked by printing with headless Chromium and reading the PDF text back with pypdf (open
library). Skipped with the reason when either is missing outside CI; in CI a missing
Chromium fails (it is installed by .ci/run), a missing pypdf skips (optional test library).
"""
from __future__ import annotations

import os
import re
import shutil
import subprocess

import pytest
from test_report_ident import CASE

from fdwall.cli import main


def test_printed_pdf_has_page_numbers(tmp_path, capsys):
    exe = shutil.which("chromium") or shutil.which("chromium-browser")
    if exe is None:
        if os.environ.get("CI") or os.environ.get("FDWALL_EXPECT_CHROMIUM"):
            pytest.fail("chromium expected in CI but not found")
        pytest.skip("chromium not installed")
    pypdf = pytest.importorskip("pypdf", reason="pypdf (optional test library) not installed")
    p = tmp_path / "door.toml"
    p.write_text(CASE)
    out = tmp_path / "out"
    assert main(["run", str(p), "--out", str(out), "--report", "--quiet"]) == 0
    pdf = tmp_path / "r.pdf"
    subprocess.run([exe, "--headless", "--no-sandbox", "--disable-gpu", "--no-pdf-header-footer",
                    f"--print-to-pdf={pdf}", (out / "door-report.html").as_uri()],
                   check=False, timeout=180, capture_output=True)
    pages = pypdf.PdfReader(str(pdf)).pages
    n = len(pages)
    assert n >= 2
    for i, page in enumerate(pages):
        assert re.search(rf"page {i + 1} of {n}\b", page.extract_text()), i
