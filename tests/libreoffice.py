"""Run LibreOffice headless from tests, as an independent reader of written workbooks.

Tests that need it use the ``soffice`` fixture (import ``soffice_fixture``). Without LibreOffice they are
skipped with a reason, unless ``STATMARGIN_REQUIRE_LIBREOFFICE=1`` is set (CI
sets it), in which case they fail, so a missing install cannot pass silently.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

import pytest

REQUIRE_ENV = "STATMARGIN_REQUIRE_LIBREOFFICE"
TIMEOUT_SECONDS = 180
# CSV export options, by position (LibreOffice "Filter Options for the CSV
# Filter" help page): separator 44 (,), text delimiter 34 ("), character set
# 76 (UTF-8), start row 1, no column formats, language 0, do not quote all text,
# (import only), save cell contents as shown, (import only), (import only),
# then the sheet to export: 1-based position, or -1 for every sheet to its own file.
_CSV_FILTER = (
    "csv:Text - txt - csv (StarCalc):44,34,76,1,,0,false,true,{as_shown},false,false,{sheet}"
)


def find_soffice() -> str | None:
    """Path of the LibreOffice program, or None when it is not installed."""
    for name in ("soffice", "libreoffice"):
        found = shutil.which(name)
        if found:
            return found
    for candidate in (
        "/usr/lib/libreoffice/program/soffice",
        "/opt/libreoffice/program/soffice",
        "/Applications/LibreOffice.app/Contents/MacOS/soffice",
    ):
        if Path(candidate).exists():
            return candidate
    return None


def convert(path: str | Path, fmt: str, outdir: str | Path, *, soffice: str | None = None) -> Path:
    """Convert a file with LibreOffice headless and return the output path.

    Parameters
    ----------
    path : str or Path
        The input workbook.
    fmt : str
        A ``--convert-to`` target such as ``"pdf"`` or a full filter string.
    outdir : str or Path
        Folder for the output.
    soffice : str, optional
        The program to run; found on PATH if omitted.

    Returns
    -------
    Path
        The converted file (for per-sheet CSV, the single sheet's file).

    Notes
    -----
    A private, throw-away user profile keeps runs independent of each other and
    of any LibreOffice the user has open.
    """
    program = soffice or find_soffice()
    if program is None:
        raise FileNotFoundError("LibreOffice (soffice) is not installed")
    outdir = Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    before = set(outdir.iterdir())
    with tempfile.TemporaryDirectory(prefix="statmargin-lo-profile-") as profile:
        completed = subprocess.run(
            [
                program,
                f"-env:UserInstallation={Path(profile).as_uri()}",
                "--headless",
                "--norestore",
                "--convert-to",
                fmt,
                "--outdir",
                str(outdir),
                str(path),
            ],
            capture_output=True,
            text=True,
            timeout=TIMEOUT_SECONDS,
            check=False,
        )
    made = sorted(set(outdir.iterdir()) - before)
    if completed.returncode != 0 or not made:
        raise RuntimeError(
            f"LibreOffice conversion failed ({completed.returncode}): {completed.stdout} {completed.stderr}"
        )
    return made[0]


def sheet_to_csv(
    path: str | Path,
    sheet_position: int,
    outdir: str | Path,
    *,
    as_shown: bool = False,
    soffice: str | None = None,
) -> Path:
    """Export one sheet (1-based position) of a workbook to CSV with LibreOffice.

    ``as_shown=True`` writes what the cell format displays (e.g. "<0.001")
    instead of the stored value.
    """
    fmt = _CSV_FILTER.format(as_shown="true" if as_shown else "false", sheet=sheet_position)
    return convert(path, fmt, outdir, soffice=soffice)


def require_soffice() -> str:
    """The LibreOffice program; skips the test without it, fails instead when CI requires it."""
    program = find_soffice()
    if program is None:
        if os.environ.get(REQUIRE_ENV) == "1":
            pytest.fail(
                f"LibreOffice is required ({REQUIRE_ENV}=1) but soffice was not found on PATH"
            )
        pytest.skip(
            "LibreOffice (soffice) is not installed; set it up to run the interoperability checks"
        )
    return program


@pytest.fixture(name="soffice")
def soffice_fixture() -> str:
    """The LibreOffice program, for tests that convert files with it."""
    return require_soffice()
