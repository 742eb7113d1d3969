"""Make the robustness corpus: workbooks from other writers, files that are no workbook, hostile files.

Every file is generated here at test time into a temporary folder, so nothing
binary is committed. All data is invented (an invented outreach programme's
clinic visits); it describes no real programme or person.

Each ``Case`` says what the file is, how to make it and what the command line
must do with it: every step is a command (``{book}`` stands for the file) with
the exit code and a piece of the one-line message the user must get. Run this
module to write the corpus into a folder and print each case's outcome, which
is how the README's reliability table was filled::

    python tests/corpus/make_corpus.py /tmp/statmargin-corpus

Groups: ``writers`` (other programs' workbooks, all processed), ``not a
workbook``, ``hostile``, ``awkward`` (valid but unusual data), ``legacy``
(.xls and .ods: read, not written).
"""

from __future__ import annotations

import datetime as dt
import os
import re
import shutil
import subprocess
import sys
import tempfile
import zlib
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import xlsxwriter

from statmargin.io.file.zipio import ZipEntry, new_entry, read_zip, write_zip

OK, INPUT, LOCKED, WRITE = 0, 2, 3, 4
SHEET = "Visits"
SITES = ("Harbour", "Millbrook", "Ashgrove")
N_ROWS = 60
MAIN_NS = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
PKG_REL_NS = "http://schemas.openxmlformats.org/package/2006/relationships"
CT_NS = "http://schemas.openxmlformats.org/package/2006/content-types"
# Strict Open XML namespaces (ECMA-376 Part 1, 5th edition, strict conformance).
STRICT = {
    MAIN_NS: "http://purl.oclc.org/ooxml/spreadsheetml/main",
    REL_NS: "http://purl.oclc.org/ooxml/officeDocument/relationships",
}
# The plan and run every processed workbook gets (columns of ``visits``).
PLAN = ("plan", "{book}", "--sheet", SHEET, "--outcome", "Wait minutes", "--by", "Site")
RUN = ("run", "{book}", "--quiet")
TEST = ("test", "{book}", "--sheet", SHEET, "--outcome", "Wait minutes", "--by", "Site")


@dataclass(frozen=True)
class Step:
    """One command on the case's file: arguments, exit code, and words the one line must hold."""

    args: tuple[str, ...]
    code: int = OK
    says: str | None = None


@dataclass
class Case:
    """One corpus file, how it is made, and what the command line must do with it."""

    name: str
    group: str
    what: str  # the kind of file, in the user's words (for the README table)
    make: Callable[[Path], Path]
    steps: tuple[Step, ...]
    needs_soffice: bool = False
    # Parts carried byte for byte; a missing one fails the case (checked by the tests).
    carried: tuple[str, ...] = ()
    extra: dict[str, Any] = field(default_factory=dict)

    @property
    def processed(self) -> bool:
        """Whether the case's file is read and written (every step succeeds)."""
        return all(step.code == OK for step in self.steps)


def processed(*first: Step) -> tuple[Step, ...]:
    """The steps of a workbook that must go all the way: optional extra steps, then test, plan, run, run."""
    return (*first, Step(TEST), Step(PLAN), Step(RUN), Step(RUN))


def refused(code: int, says: str, *commands: tuple[str, ...]) -> tuple[Step, ...]:
    """Every command refuses the file with one line holding ``says``."""
    return tuple(Step(args, code, says) for args in (commands or (TEST, PLAN, RUN)))


def sheet_refused(says: str) -> tuple[Step, ...]:
    """The data sheet cannot be read: test and plan say why; so run finds no roles sheet and says to plan first."""
    return (*refused(INPUT, says, TEST, PLAN), Step(RUN, INPUT, "statmargin plan"))


# ---------------------------------------------------------------- invented data


def visits(n: int = N_ROWS, seed: int = 20260301) -> list[tuple[str, float, str]]:
    """Invented visits: site, wait in minutes (four decimals, so formats show), follow-up yes/no."""
    rng = np.random.default_rng(seed)
    centre = {"Harbour": 30.0, "Millbrook": 38.0, "Ashgrove": 33.0}
    return [
        (
            SITES[i % 3],
            round(float(rng.normal(centre[SITES[i % 3]], 6.0)), 4),
            "yes" if rng.random() < 0.6 else "no",
        )
        for i in range(n)
    ]


HEADERS = ("Site", "Wait minutes", "Follow-up")


@contextmanager
def new_sheet(path: Path, name: str = SHEET, **options: Any) -> Iterator[tuple[Any, Any]]:
    """An XlsxWriter workbook at ``path`` with one sheet, closed (written) when the block ends."""
    book = xlsxwriter.Workbook(str(path), options)
    try:
        yield book, book.add_worksheet(name)
    finally:
        book.close()


def xlsxwriter_book(path: Path, *, extra: Callable[[Any, Any], None] | None = None, n: int = N_ROWS) -> Path:
    """The visits on sheet ``Visits``, written by XlsxWriter; ``extra(book, sheet)`` adds more."""
    with new_sheet(path) as (book, sheet):
        sheet.write_row(0, 0, HEADERS)
        for r, row in enumerate(visits(n), start=1):
            sheet.write_row(r, 0, row)
        if extra is not None:
            extra(book, sheet)
    return path


def big_book(path: Path, n_rows: int, *, seed: int = 20260302) -> Path:
    """{n_rows:,} invented visits written straight as package parts (much faster than a writer library).

    The sheet uses shared strings for the three sites and yes/no and plain numbers
    for the waits, as spreadsheet programs save them.
    """
    rng = np.random.default_rng(seed)
    waits = rng.normal(33.0, 6.0, n_rows).round(2)
    strings = [*HEADERS, *SITES, "yes", "no"]
    index = {text: i for i, text in enumerate(strings)}
    rows = ['<row r="1"><c r="A1" t="s"><v>0</v></c><c r="B1" t="s"><v>1</v></c><c r="C1" t="s"><v>2</v></c></row>']
    follow = np.where(rng.random(n_rows) < 0.6, index["yes"], index["no"])
    for i in range(n_rows):
        r = i + 2
        rows.append(
            f'<row r="{r}"><c r="A{r}" t="s"><v>{index[SITES[i % 3]]}</v></c><c r="B{r}"><v>{float(waits[i])!r}</v></c>'
            f'<c r="C{r}" t="s"><v>{follow[i]}</v></c></row>'
        )
    sheet = (f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<worksheet xmlns="{MAIN_NS}">'
             f'<dimension ref="A1:C{n_rows + 1}"/><sheetData>{"".join(rows)}</sheetData></worksheet>')
    sst = (f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<sst xmlns="{MAIN_NS}" count="{3 * n_rows + 3}" '
           f'uniqueCount="{len(strings)}">' + "".join(f"<si><t>{t}</t></si>" for t in strings) + "</sst>")
    ct = "application/vnd.openxmlformats-officedocument.spreadsheetml."
    parts = {
        "[Content_Types].xml": (
            f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<Types xmlns="{CT_NS}">'
            '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
            '<Default Extension="xml" ContentType="application/xml"/>'
            f'<Override PartName="/xl/workbook.xml" ContentType="{ct}sheet.main+xml"/>'
            f'<Override PartName="/xl/worksheets/sheet1.xml" ContentType="{ct}worksheet+xml"/>'
            f'<Override PartName="/xl/sharedStrings.xml" ContentType="{ct}sharedStrings+xml"/></Types>'
        ),
        "_rels/.rels": add_relationship(empty_rels(), "rId1", REL_NS + "/officeDocument", "xl/workbook.xml"),
        "xl/workbook.xml": (
            f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<workbook xmlns="{MAIN_NS}" xmlns:r="{REL_NS}">'
            f'<sheets><sheet name="{SHEET}" sheetId="1" r:id="rId1"/></sheets></workbook>'
        ),
        "xl/_rels/workbook.xml.rels": add_relationship(
            add_relationship(empty_rels(), "rId1", REL_NS + "/worksheet", "worksheets/sheet1.xml"),
            "rId2", REL_NS + "/sharedStrings", "sharedStrings.xml"),
        "xl/worksheets/sheet1.xml": sheet,
        "xl/sharedStrings.xml": sst,
    }
    path.write_bytes(write_zip([new_entry(name, text.encode("utf-8")) for name, text in parts.items()]))
    return path


# ---------------------------------------------------------------- package surgery


def parts_of(path: Path) -> dict[str, ZipEntry]:
    """A package's entries by name."""
    return {e.name: e for e in read_zip(path.read_bytes())}


def rewrite(path: Path, target: Path, changes: dict[str, bytes | None], *, add: dict[str, bytes] | None = None) -> Path:
    """Copy a package with some parts replaced (None drops one) and some added; others keep their bytes."""
    out = []
    for entry in read_zip(path.read_bytes()):
        if entry.name in changes:
            data = changes[entry.name]
            if data is None:
                continue
            replacement = new_entry(entry.name, data)
            out.append(replacement)
        else:
            out.append(entry)
    for name, data in (add or {}).items():
        out.append(new_entry(name, data))
    target.write_bytes(write_zip(out))
    return target


def text_of(path: Path, part: str) -> str:
    return parts_of(path)[part].data().decode("utf-8")


def add_relationship(rels: str, rel_id: str, rel_type: str, target: str, *, external: bool = False) -> str:
    """A rels part with one more relationship."""
    mode = ' TargetMode="External"' if external else ""
    new = f'<Relationship Id="{rel_id}" Type="{rel_type}" Target="{target}"{mode}/>'
    return rels.replace("</Relationships>", new + "</Relationships>")


def add_override(types: str, part: str, content_type: str) -> str:
    """A content-types part with one more override."""
    return types.replace("</Types>", f'<Override PartName="/{part}" ContentType="{content_type}"/></Types>')


def empty_rels() -> str:
    return f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<Relationships xmlns="{PKG_REL_NS}"></Relationships>'


# ---------------------------------------------------------------- writers


_OPENPYXL_SCRIPT = """
import sys, openpyxl
from openpyxl.xml import LXML
rows = {rows!r}
book = openpyxl.Workbook()
sheet = book.active
sheet.title = {sheet!r}
sheet.append({headers!r})
for row in rows:
    sheet.append(list(row))
for cell in sheet["B"][1:]:
    cell.number_format = "0.0"
book.save(sys.argv[1])
print("lxml" if LXML else "etree")
"""


def openpyxl_book(path: Path, *, lxml: bool) -> Path:
    """Visits saved by openpyxl, with or without lxml (openpyxl picks it when importing)."""
    env = dict(os.environ, OPENPYXL_LXML="True" if lxml else "False")
    script = _OPENPYXL_SCRIPT.format(rows=visits(), sheet=SHEET, headers=HEADERS)
    done = subprocess.run(
        [sys.executable, "-c", script, str(path)], env=env, capture_output=True, text=True, check=True
    )
    used = done.stdout.strip()
    if used != ("lxml" if lxml else "etree"):
        raise RuntimeError(f"openpyxl wrote with {used}; install lxml for the lxml cases")
    return path


def pandas_book(path: Path, *, engine: str) -> Path:
    """Visits saved by pandas ``DataFrame.to_excel`` through openpyxl or XlsxWriter."""
    import pandas as pd

    frame = pd.DataFrame(visits(), columns=list(HEADERS))
    frame.to_excel(path, sheet_name=SHEET, index=False, engine=engine)
    return path


def dxf_formats_book(path: Path) -> Path:
    """Conditional formats whose number formats 0.000 and 0.0% exist only among differential styles."""

    def extra(book: Any, sheet: Any) -> None:
        three = book.add_format({"num_format": "0.000", "bold": True})
        share = book.add_format({"num_format": "0.0%"})
        sheet.conditional_format(1, 1, N_ROWS, 1, {"type": "cell", "criteria": ">", "value": 40, "format": three})
        sheet.conditional_format(1, 1, N_ROWS, 1, {"type": "cell", "criteria": "<", "value": 20, "format": share})

    return xlsxwriter_book(path, extra=extra)


def prefixed_book(path: Path) -> Path:
    """SpreadsheetML under an ``x:`` prefix (as .NET Open XML SDK writes it), other prefixes renamed.

    The main namespace is bound to ``x`` in the workbook, sheet, styles and
    shared-strings parts; relationships are bound to ``rel`` on the workbook and
    the package parts use prefixed elements (``ct:Types``, ``pr:Relationships``).
    """
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    parts = parts_of(base)
    changes: dict[str, bytes | None] = {}
    for name, entry in parts.items():
        text = entry.data().decode("utf-8")
        if f'xmlns="{MAIN_NS}"' in text:
            text = _prefix_elements(text, "x").replace(f'xmlns="{MAIN_NS}"', f'xmlns:x="{MAIN_NS}"')
            text = text.replace(f'xmlns:r="{REL_NS}"', f'xmlns:rel="{REL_NS}"').replace(" r:id=", " rel:id=")
        elif f'xmlns="{CT_NS}"' in text:
            text = _prefix_elements(text, "ct").replace(f'xmlns="{CT_NS}"', f'xmlns:ct="{CT_NS}"')
        elif f'xmlns="{PKG_REL_NS}"' in text:
            text = _prefix_elements(text, "pr").replace(f'xmlns="{PKG_REL_NS}"', f'xmlns:pr="{PKG_REL_NS}"')
        else:
            continue
        changes[name] = text.encode("utf-8")
    rewrite(base, path, changes)
    base.unlink()
    return path


def _prefix_elements(text: str, prefix: str) -> str:
    """Put ``prefix:`` on every element name that has no prefix."""
    return re.sub(r"<(/?)([A-Za-z_][\w.-]*)(?=[\s/>])", lambda m: f"<{m.group(1)}{prefix}:{m.group(2)}", text)


def strict_book(path: Path) -> Path:
    """A workbook in Strict Open XML: the transitional namespaces swapped for the purl.oclc.org ones."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    changes: dict[str, bytes | None] = {}
    for name, entry in parts_of(base).items():
        text = entry.data().decode("utf-8")
        new = text
        for old, strict in STRICT.items():
            new = new.replace(f'"{old}"', f'"{strict}"')
        new = new.replace(f'"{REL_NS}/', '"http://purl.oclc.org/ooxml/officeDocument/relationships/')
        if new != text:
            changes[name] = new.encode("utf-8")
    rewrite(base, path, changes)
    base.unlink()
    return path


def formulas_book(path: Path, *, cached: bool = True) -> Path:
    """Visits with a total formula column (cached values unless ``cached`` is False)."""

    def extra(book: Any, sheet: Any) -> None:
        sheet.write(0, 3, "Wait hours")
        for r, (_, wait, _) in enumerate(visits(), start=1):
            sheet.write_formula(r, 3, f"=B{r + 1}/60", None, wait / 60 if cached else "")

    return xlsxwriter_book(path, extra=extra)


def calc_chain_book(path: Path) -> Path:
    """Formulas plus the calculation chain Excel keeps beside them (``xl/calcChain.xml``)."""
    base = formulas_book(path.with_name(path.stem + "-base.xlsx"))
    cells = "".join(f'<c r="D{r}" i="1"/>' for r in range(2, N_ROWS + 2))
    chain = f'<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n<calcChain xmlns="{MAIN_NS}">{cells}</calcChain>'
    rels = add_relationship(text_of(base, "xl/_rels/workbook.xml.rels"), "rId90", REL_NS + "/calcChain", "calcChain.xml")
    types = add_override(
        text_of(base, "[Content_Types].xml"), "xl/calcChain.xml",
        "application/vnd.openxmlformats-officedocument.spreadsheetml.calcChain+xml",
    )
    rewrite(base, path, {"xl/_rels/workbook.xml.rels": rels.encode(), "[Content_Types].xml": types.encode()},
            add={"xl/calcChain.xml": chain.encode()})
    base.unlink()
    return path


def external_link_book(path: Path) -> Path:
    """A formula that reads another workbook, with the external-link part Excel keeps for it."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    link = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<externalLink xmlns="{MAIN_NS}" xmlns:r="{REL_NS}"><externalBook r:id="rId1">'
        '<sheetNames><sheetName val="Targets"/></sheetNames>'
        '<sheetDataSet><sheetData sheetId="0"><row r="1"><cell r="A1"><v>45</v></cell></row></sheetData></sheetDataSet>'
        "</externalBook></externalLink>"
    )
    link_rels = add_relationship(empty_rels(), "rId1", REL_NS + "/externalLinkPath", "targets-2026.xlsx", external=True)
    workbook = text_of(base, "xl/workbook.xml").replace(
        "</sheets>", '</sheets><externalReferences><externalReference r:id="rId91"/></externalReferences>'
    )
    rels = add_relationship(text_of(base, "xl/_rels/workbook.xml.rels"), "rId91", REL_NS + "/externalLink",
                            "externalLinks/externalLink1.xml")
    types = add_override(text_of(base, "[Content_Types].xml"), "xl/externalLinks/externalLink1.xml",
                         "application/vnd.openxmlformats-officedocument.spreadsheetml.externalLink+xml")
    rewrite(
        base, path,
        {"xl/workbook.xml": workbook.encode(), "xl/_rels/workbook.xml.rels": rels.encode(), "[Content_Types].xml": types.encode()},
        add={"xl/externalLinks/externalLink1.xml": link.encode(),
             "xl/externalLinks/_rels/externalLink1.xml.rels": link_rels.encode()},
    )
    base.unlink()
    return path


def pivot_book(path: Path) -> Path:
    """A pivot table on a second sheet with its cache definition and records, as Excel stores them."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"),
                           extra=lambda book, sheet: book.add_worksheet("Pivot").write(0, 0, "Site"))
    definition = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<pivotCacheDefinition xmlns="{MAIN_NS}" xmlns:r="{REL_NS}" r:id="rId1" recordCount="{N_ROWS}">'
        f'<cacheSource type="worksheet"><worksheetSource ref="A1:C{N_ROWS + 1}" sheet="{SHEET}"/></cacheSource>'
        '<cacheFields count="1"><cacheField name="Site" numFmtId="0"><sharedItems count="3">'
        + "".join(f'<s v="{s}"/>' for s in SITES)
        + "</sharedItems></cacheField></cacheFields></pivotCacheDefinition>"
    )
    records = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<pivotCacheRecords xmlns="{MAIN_NS}" count="{N_ROWS}">'
        + "".join(f'<r><x v="{i % 3}"/></r>' for i in range(N_ROWS))
        + "</pivotCacheRecords>"
    )
    table = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<pivotTableDefinition xmlns="{MAIN_NS}" name="VisitsBySite" cacheId="7" dataCaption="Values">'
        '<location ref="A3:A6" firstHeaderRow="1" firstDataRow="1" firstDataCol="0"/>'
        '<pivotFields count="1"><pivotField axis="axisRow" showAll="0"><items count="4">'
        '<item x="0"/><item x="1"/><item x="2"/><item t="default"/></items></pivotField></pivotFields>'
        '<rowFields count="1"><field x="0"/></rowFields></pivotTableDefinition>'
    )
    ct = "application/vnd.openxmlformats-officedocument.spreadsheetml."
    workbook = text_of(base, "xl/workbook.xml").replace(
        "</workbook>", '<pivotCaches><pivotCache cacheId="7" r:id="rId92"/></pivotCaches></workbook>'
    )
    rels = add_relationship(text_of(base, "xl/_rels/workbook.xml.rels"), "rId92", REL_NS + "/pivotCacheDefinition",
                            "pivotCache/pivotCacheDefinition1.xml")
    types = text_of(base, "[Content_Types].xml")
    for part, kind in (("xl/pivotCache/pivotCacheDefinition1.xml", "pivotCacheDefinition+xml"),
                       ("xl/pivotCache/pivotCacheRecords1.xml", "pivotCacheRecords+xml"),
                       ("xl/pivotTables/pivotTable1.xml", "pivotTable+xml")):
        types = add_override(types, part, ct + kind)
    rewrite(
        base, path,
        {"xl/workbook.xml": workbook.encode(), "xl/_rels/workbook.xml.rels": rels.encode(), "[Content_Types].xml": types.encode()},
        add={
            "xl/pivotCache/pivotCacheDefinition1.xml": definition.encode(),
            "xl/pivotCache/_rels/pivotCacheDefinition1.xml.rels": add_relationship(
                empty_rels(), "rId1", REL_NS + "/pivotCacheRecords", "pivotCacheRecords1.xml").encode(),
            "xl/pivotCache/pivotCacheRecords1.xml": records.encode(),
            "xl/pivotTables/pivotTable1.xml": table.encode(),
            "xl/pivotTables/_rels/pivotTable1.xml.rels": add_relationship(
                empty_rels(), "rId1", REL_NS + "/pivotCacheDefinition", "../pivotCache/pivotCacheDefinition1.xml").encode(),
            "xl/worksheets/_rels/sheet2.xml.rels": add_relationship(
                empty_rels(), "rId1", REL_NS + "/pivotTable", "../pivotTables/pivotTable1.xml").encode(),
        },
    )
    base.unlink()
    return path


def slicer_book(path: Path) -> Path:
    """A slicer (its cache in the workbook's extensions, its drawing on the data sheet), as Excel 2010+ stores them."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    x14 = "http://schemas.microsoft.com/office/spreadsheetml/2009/9/main"
    rel_cache = "http://schemas.microsoft.com/office/2007/relationships/slicerCache"
    rel_slicer = "http://schemas.microsoft.com/office/2007/relationships/slicer"
    cache = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<slicerCacheDefinition xmlns="{x14}" name="Slicer_Site" sourceName="Site">'
        '<data><tabular pivotCacheId="1"><items count="3"><i x="0" s="1"/><i x="1" s="1"/><i x="2" s="1"/></items>'
        "</tabular></data></slicerCacheDefinition>"
    )
    slicer = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<slicers xmlns="{x14}"><slicer name="Site" cache="Slicer_Site" caption="Site" rowHeight="241300"/></slicers>'
    )
    ext = (
        f'<extLst><ext uri="{{BBE1A952-AA13-448e-AADC-164F8A28A991}}" xmlns:x14="{x14}">'
        '<x14:slicerCaches><x14:slicerCache r:id="rId93"/></x14:slicerCaches></ext></extLst>'
    )
    workbook = text_of(base, "xl/workbook.xml").replace("</workbook>", ext + "</workbook>")
    rels = add_relationship(text_of(base, "xl/_rels/workbook.xml.rels"), "rId93", rel_cache,
                            "slicerCaches/slicerCache1.xml")
    sheet = text_of(base, "xl/worksheets/sheet1.xml").replace(
        "</worksheet>",
        f'<extLst><ext uri="{{A8765BA9-456A-4dab-B4F3-ACF838C121DE}}" xmlns:x14="{x14}">'
        '<x14:slicerList><x14:slicer r:id="rId1"/></x14:slicerList></ext></extLst></worksheet>',
    )
    if 'xmlns:r="' not in sheet.split(">", 2)[1]:
        sheet = sheet.replace(f'xmlns="{MAIN_NS}"', f'xmlns="{MAIN_NS}" xmlns:r="{REL_NS}"', 1)
    types = add_override(text_of(base, "[Content_Types].xml"), "xl/slicerCaches/slicerCache1.xml",
                         "application/vnd.ms-excel.slicerCache+xml")
    types = add_override(types, "xl/slicers/slicer1.xml", "application/vnd.ms-excel.slicer+xml")
    rewrite(
        base, path,
        {"xl/workbook.xml": workbook.encode(), "xl/_rels/workbook.xml.rels": rels.encode(),
         "xl/worksheets/sheet1.xml": sheet.encode(), "[Content_Types].xml": types.encode()},
        add={"xl/slicerCaches/slicerCache1.xml": cache.encode(), "xl/slicers/slicer1.xml": slicer.encode(),
             "xl/worksheets/_rels/sheet1.xml.rels": add_relationship(empty_rels(), "rId1", rel_slicer,
                                                                      "../slicers/slicer1.xml").encode()},
    )
    base.unlink()
    return path


def threaded_comments_book(path: Path) -> Path:
    """A threaded comment (a reply thread) with the people list Excel 365 keeps for it."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    ns = "http://schemas.microsoft.com/office/spreadsheetml/2018/threadedcomments"
    person_id = "{7D1D6B4C-0A3E-4F3B-9A35-0C1E8F0A9B11}"
    persons = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<personList xmlns="{ns}"><person displayName="Invented Reviewer" id="{person_id}" providerId="None"/></personList>'
    )
    comments = (
        '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
        f'<ThreadedComments xmlns="{ns}"><threadedComment ref="B2" dT="2026-03-02T09:00:00.00" '
        f'personId="{person_id}" id="{{3F2A1C55-1111-4C4C-8B8B-2A2A2A2A2A2A}}"><text>Check this wait (invented).</text>'
        "</threadedComment></ThreadedComments>"
    )
    rels = add_relationship(text_of(base, "xl/_rels/workbook.xml.rels"), "rId94",
                            "http://schemas.microsoft.com/office/2017/10/relationships/person", "persons/person.xml")
    types = add_override(text_of(base, "[Content_Types].xml"), "xl/persons/person.xml",
                         "application/vnd.ms-excel.person+xml")
    types = add_override(types, "xl/threadedComments/threadedComment1.xml",
                         "application/vnd.ms-excel.threadedcomments+xml")
    rewrite(
        base, path,
        {"xl/_rels/workbook.xml.rels": rels.encode(), "[Content_Types].xml": types.encode()},
        add={
            "xl/persons/person.xml": persons.encode(),
            "xl/threadedComments/threadedComment1.xml": comments.encode(),
            "xl/worksheets/_rels/sheet1.xml.rels": add_relationship(
                empty_rels(), "rId1", "http://schemas.microsoft.com/office/2017/10/relationships/threadedComment",
                "../threadedComments/threadedComment1.xml").encode(),
        },
    )
    base.unlink()
    return path


# ---------------------------------------------------------------- LibreOffice


def find_soffice() -> str | None:
    """The LibreOffice program, or None."""
    for name in ("soffice", "libreoffice"):
        found = shutil.which(name)
        if found:
            return found
    return None


def libreoffice_convert(source: Path, target: Path, filter_name: str) -> Path:
    """Have LibreOffice open ``source`` and save it as ``target`` with a given export filter."""
    program = find_soffice()
    if program is None:
        raise FileNotFoundError("LibreOffice (soffice) is not installed")
    with tempfile.TemporaryDirectory(prefix="statmargin-corpus-lo-") as work:
        outdir = Path(work) / "out"
        with tempfile.TemporaryDirectory(prefix="statmargin-lo-profile-") as profile:
            done = subprocess.run(
                [program, f"-env:UserInstallation={Path(profile).as_uri()}", "--headless", "--norestore",
                 "--convert-to", f"{target.suffix.lstrip('.')}:{filter_name}", "--outdir", str(outdir), str(source)],
                capture_output=True, text=True, timeout=180, check=False,
            )
        made = list(outdir.glob("*")) if outdir.exists() else []
        if done.returncode != 0 or len(made) != 1:
            raise RuntimeError(f"LibreOffice conversion failed: {done.stdout} {done.stderr}")
        shutil.move(str(made[0]), target)
    return target


def libreoffice_resave(path: Path) -> Path:
    """An XlsxWriter workbook opened and saved again by LibreOffice Calc."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    libreoffice_convert(base, path, "Calc MS Excel 2007 XML")
    base.unlink()
    return path


def legacy_book(path: Path) -> Path:
    """The visits as an old .xls (Excel 97-2003) or .ods file, saved by LibreOffice."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    libreoffice_convert(base, path, "MS Excel 97" if path.suffix == ".xls" else "calc8")
    base.unlink()
    return path


# ---------------------------------------------------------------- not a workbook


def empty_file(path: Path) -> Path:
    path.write_bytes(b"")
    return path


def truncated(path: Path) -> Path:
    data = xlsxwriter_book(path).read_bytes()
    path.write_bytes(data[: len(data) * 2 // 3])
    return path


def csv_renamed(path: Path) -> Path:
    lines = [",".join(HEADERS)] + [f"{s},{w},{f}" for s, w, f in visits()]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def html_renamed(path: Path) -> Path:
    """A web page saved with a workbook's name, as some reporting systems export 'Excel' files."""
    rows = "".join(f"<tr><td>{s}</td><td>{w}</td></tr>" for s, w, _ in visits())
    path.write_text(f"<html><body><table><tr><th>Site</th><th>Wait minutes</th></tr>{rows}</table></body></html>",
                    encoding="utf-8")
    return path


def empty_zip(path: Path) -> Path:
    import zipfile

    zipfile.ZipFile(path, "w").close()
    return path


def zip_of_text(path: Path) -> Path:
    """A zip holding a text file, named .xlsx (an archive, not a workbook)."""
    path.write_bytes(write_zip([new_entry("readme.txt", b"Invented notes, not a workbook.\n")]))
    return path


def random_bytes(path: Path) -> Path:
    path.write_bytes(bytes(np.random.default_rng(7).integers(0, 256, 4096, dtype=np.uint8)))
    return path


def encrypted(path: Path) -> Path:
    """A compound file holding an ``EncryptedPackage`` stream, the way password-protected workbooks are stored.

    The container is built by hand (MS-CFB: a 512-byte header, one FAT sector,
    one directory sector with the root and two streams), with invented contents.
    """
    sector = 512
    header = bytearray(sector)
    header[0:8] = bytes.fromhex("D0CF11E0A1B11AE1")
    header[0x18:0x1A] = (0x3E).to_bytes(2, "little")  # minor version
    header[0x1A:0x1C] = (3).to_bytes(2, "little")  # major version 3: 512-byte sectors
    header[0x1C:0x1E] = (0xFFFE).to_bytes(2, "little")  # little-endian
    header[0x1E:0x20] = (9).to_bytes(2, "little")  # sector shift
    header[0x20:0x22] = (6).to_bytes(2, "little")  # mini sector shift
    header[0x2C:0x30] = (1).to_bytes(4, "little")  # one FAT sector
    header[0x30:0x34] = (1).to_bytes(4, "little")  # directory starts at sector 1
    header[0x38:0x3C] = (4096).to_bytes(4, "little")  # mini stream cutoff
    header[0x3C:0x40] = (0xFFFFFFFE).to_bytes(4, "little")  # no mini FAT
    header[0x44:0x48] = (0xFFFFFFFE).to_bytes(4, "little")  # no DIFAT sectors
    header[0x4C:0x50] = (0).to_bytes(4, "little")  # FAT in sector 0
    for i in range(1, 109):
        header[0x4C + 4 * i : 0x50 + 4 * i] = (0xFFFFFFFF).to_bytes(4, "little")
    fat = bytearray(b"\xff" * sector)
    fat[0:4] = (0xFFFFFFFD).to_bytes(4, "little")  # sector 0 is the FAT
    fat[4:8] = (0xFFFFFFFE).to_bytes(4, "little")  # sector 1 (directory) ends its chain
    fat[8:12] = (0xFFFFFFFE).to_bytes(4, "little")  # sector 2 (stream data) ends its chain

    def entry(name: str, kind: int, start: int, size: int, child: int = 0xFFFFFFFF, right: int = 0xFFFFFFFF) -> bytes:
        raw = bytearray(128)
        encoded = (name + "\x00").encode("utf-16-le")
        raw[0 : len(encoded)] = encoded
        raw[0x40:0x42] = len(encoded).to_bytes(2, "little")
        raw[0x42] = kind
        raw[0x43] = 1  # black
        raw[0x44:0x48] = (0xFFFFFFFF).to_bytes(4, "little")
        raw[0x48:0x4C] = right.to_bytes(4, "little")
        raw[0x4C:0x50] = child.to_bytes(4, "little")
        raw[0x74:0x78] = start.to_bytes(4, "little")
        raw[0x78:0x80] = size.to_bytes(8, "little")
        return bytes(raw)

    directory = (
        entry("Root Entry", 5, 0xFFFFFFFE, 0, child=1)
        + entry("EncryptedPackage", 2, 2, 512, right=2)
        + entry("EncryptionInfo", 2, 2, 64)
        + bytes(128)
    )
    payload = bytes(np.random.default_rng(11).integers(0, 256, sector, dtype=np.uint8))
    path.write_bytes(bytes(header) + bytes(fat) + directory + payload)
    return path


# ---------------------------------------------------------------- hostile


def with_part(path: Path, part: str, edit: Callable[[str], str]) -> Path:
    """The visits workbook with one part's text edited."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    rewrite(base, path, {part: edit(text_of(base, part)).encode("utf-8")})
    base.unlink()
    return path


def _doctype(text: str, root: str, internal: str) -> str:
    head, sep, rest = text.partition("?>")
    return f"{head}{sep}\n<!DOCTYPE {root} [{internal}]>{rest.lstrip()}"


def xxe_sheet(path: Path) -> Path:
    """A sheet whose cell text refers to an external entity naming a local file (XXE)."""

    def edit(text: str) -> str:
        text = _doctype(text, "worksheet", '<!ENTITY secret SYSTEM "file:///etc/passwd">')
        return re.sub(r'<c r="A2"[^>]*?(/>|>.*?</c>)', '<c r="A2" t="inlineStr"><is><t>&secret;</t></is></c>', text, count=1)

    return with_part(path, "xl/worksheets/sheet1.xml", edit)


def xxe_workbook(path: Path) -> Path:
    """The workbook part itself declares an external entity (XXE) and uses it in a defined name."""

    def edit(text: str) -> str:
        text = _doctype(text, "workbook", '<!ENTITY secret SYSTEM "file:///etc/passwd">')
        return text.replace("</sheets>", '</sheets><definedNames><definedName name="Leak">&secret;</definedName></definedNames>')

    return with_part(path, "xl/workbook.xml", edit)


def entity_expansion(path: Path) -> Path:
    """The shared strings expand nested entities to gigabytes ('billion laughs')."""
    entities = '<!ENTITY a0 "hahahahahahahahahaha">' + "".join(
        f'<!ENTITY a{i} "{("&a" + str(i - 1) + ";") * 10}">' for i in range(1, 10)
    )

    def edit(text: str) -> str:
        text = _doctype(text, "sst", entities)
        return text.replace("<t>Harbour</t>", "<t>&a9;</t>", 1)

    return with_part(path, "xl/sharedStrings.xml", edit)


def deep_nesting(path: Path, depth: int = 100_000) -> Path:
    """The data sheet carries an extension nested {depth:,} elements deep."""
    nested = "<x:n>" * depth + "</x:n>" * depth
    ext = f'<extLst><ext uri="{{00000000-0000-0000-0000-00000000D33P}}" xmlns:x="urn:invented:nesting">{nested}</ext></extLst>'
    return with_part(path, "xl/worksheets/sheet1.xml", lambda text: text.replace("</worksheet>", ext + "</worksheet>"))


def _bomb_entry(name: str, n_bytes: int) -> ZipEntry:
    """A deflated part of ``n_bytes`` of XML whitespace inside a sheet element (compresses about 1000:1)."""
    compressor = zlib.compressobj(9, zlib.DEFLATED, -15)
    head = f'<worksheet xmlns="{MAIN_NS}"><sheetData>'.encode()
    tail = b"</sheetData></worksheet>"
    crc = zlib.crc32(head)
    raw = [compressor.compress(head)]
    chunk = b" " * (1 << 20)
    for _ in range((n_bytes - len(head) - len(tail)) // len(chunk)):
        raw.append(compressor.compress(chunk))
        crc = zlib.crc32(chunk, crc)
    raw.append(compressor.compress(tail))
    crc = zlib.crc32(tail, crc)
    raw.append(compressor.flush())
    size = len(head) + len(tail) + (n_bytes - len(head) - len(tail)) // len(chunk) * len(chunk)
    return ZipEntry(name=name, method=8, crc=crc & 0xFFFFFFFF, size=size, raw=b"".join(raw))


def bomb_ratio(path: Path) -> Path:
    """A part that honestly declares 64 MiB but packs into about 64 KiB (a compression-ratio bomb)."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    entries = [e if e.name != "xl/worksheets/sheet1.xml" else _bomb_entry(e.name, 64 << 20) for e in read_zip(base.read_bytes())]
    path.write_bytes(write_zip(entries))
    base.unlink()
    return path


def bomb_declared(path: Path) -> Path:
    """Two extra parts whose directory entries declare almost 4 GiB each (8 GiB in all)."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    entries = read_zip(base.read_bytes())
    huge = [new_entry(f"xl/media/image{i}.png", b"\x89PNG invented") for i in (1, 2)]
    for entry in huge:
        entry.size = 0xFFFFFFFE
    path.write_bytes(write_zip([*entries, *huge]))
    base.unlink()
    return path


def bomb_actual(path: Path) -> Path:
    """The sheet part declares 4 KiB but inflates to 64 MiB (its directory lies about its size)."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    entries = []
    for entry in read_zip(base.read_bytes()):
        if entry.name == "xl/worksheets/sheet1.xml":
            entry = _bomb_entry(entry.name, 64 << 20)
            entry.size = 4096
        entries.append(entry)
    path.write_bytes(write_zip(entries))
    base.unlink()
    return path


def traversal(path: Path, name: str) -> Path:
    """A workbook carrying an extra entry whose name points outside the package."""
    base = xlsxwriter_book(path.with_name(path.stem + "-base.xlsx"))
    path.write_bytes(write_zip([*read_zip(base.read_bytes()), new_entry(name, b"echo invented\n")]))
    base.unlink()
    return path


def huge_dimension(path: Path) -> Path:
    """The sheet claims to span all 16,384 x 1,048,576 cells but holds the usual few."""
    return with_part(
        path, "xl/worksheets/sheet1.xml",
        lambda text: re.sub(r'<dimension ref="[^"]*"/>', '<dimension ref="A1:XFD1048576"/>', text, count=1),
    )


def stray_far_cell(path: Path) -> Path:
    """A value typed by mistake in the sheet's last cell, XFD1048576, far from the visits."""
    return xlsxwriter_book(path, extra=lambda book, sheet: sheet.write(1_048_575, 16_383, "oops"))


def far_cell_hidden(path: Path) -> Path:
    """A cell at XFD1048576 while the sheet's dimension still claims A1:C61 (a crafted file)."""
    return with_part(path, "xl/worksheets/sheet1.xml", lambda text: text.replace(
        "</sheetData>", '<row r="1048576"><c r="XFD1048576"><v>1</v></c></row></sheetData>'))


def beyond_grid(path: Path) -> Path:
    """A cell reference past the last column and row (XFE1048577), which no sheet can have."""
    return with_part(path, "xl/worksheets/sheet1.xml", lambda text: text.replace(
        "</sheetData>", '<row r="1048577"><c r="XFE1048577"><v>1</v></c></row></sheetData>'))


def million_strings(path: Path, n: int = 1_000_000) -> Path:
    """A shared-strings table of {n:,} unique invented strings, of which the sheet uses a few."""

    def edit(text: str) -> str:
        head, _, _ = text.partition("<si>")
        head = re.sub(r'count="\d+" uniqueCount="\d+"', f'count="{n}" uniqueCount="{n}"', head)
        used = re.findall(r"<si>.*?</si>", text)
        filler = "".join(f"<si><t>label {i:07d}</t></si>" for i in range(n - len(used)))
        return head + "".join(used) + filler + "</sst>"

    return with_part(path, "xl/sharedStrings.xml", edit)


def entity_expansion_app(path: Path) -> Path:
    """The document properties part (which only the writer edits) expands nested entities."""
    entities = '<!ENTITY a0 "hahahahahahahahahaha">' + "".join(
        f'<!ENTITY a{i} "{("&a" + str(i - 1) + ";") * 10}">' for i in range(1, 10)
    )
    return with_part(path, "docProps/app.xml",
                     lambda text: _doctype(text, "Properties", entities).replace("<Application>", "<Application>&a9;"))


def many_sheets(path: Path, n: int = 500) -> Path:
    """The visits followed by {n} - 1 small sheets of invented notes."""

    def extra(book: Any, _sheet: Any) -> None:
        for i in range(2, n + 1):
            book.add_worksheet(f"Notes {i}").write(0, 0, f"Invented note {i}")

    return xlsxwriter_book(path, extra=extra)


def long_cells(path: Path) -> Path:
    """A comment column and one site label of 32,767 characters (the most a cell holds)."""
    with new_sheet(path) as (book, sheet):
        sheet.write_row(0, 0, (*HEADERS, "Comment"))
        long_site = ("Harbour outreach point " * 1500)[:32_767]
        for r, (site, wait, follow) in enumerate(visits(), start=1):
            sheet.write_row(r, 0, (long_site if site == "Harbour" else site, wait, follow))
            sheet.write_string(r, 3, ("Invented remark. " * 2000)[:32_767])
    return path


# ---------------------------------------------------------------- awkward but valid


def title_rows(path: Path) -> Path:
    """Two title lines and a blank row above the header row."""
    with new_sheet(path) as (book, sheet):
        sheet.write(0, 0, "Outreach clinic visits, March 2026 (invented)")
        sheet.write(1, 0, "Prepared for the monthly review")
        sheet.write_row(3, 0, HEADERS)
        for r, row in enumerate(visits(), start=4):
            sheet.write_row(r, 0, row)
    return path


def merged_duplicate_headers(path: Path) -> Path:
    """A merged group header above the headers, and two columns both headed 'Wait minutes'."""
    with new_sheet(path) as (book, sheet):
        sheet.merge_range(0, 1, 0, 2, "Waiting times")
        sheet.write_row(1, 0, ("Site", "Wait minutes", "Wait minutes", "Follow-up"))
        for r, (site, wait, follow) in enumerate(visits(), start=2):
            sheet.write_row(r, 0, (site, wait, wait + 1.5, follow))
    return path


def excel_table(path: Path) -> Path:
    """The data in an Excel table with a totals row, beside other cells."""
    with new_sheet(path) as (book, sheet):
        sheet.write(0, 6, "Notes beside the table (invented)")
        rows = visits()
        sheet.add_table(0, 0, len(rows) + 1, 2, {
            "name": "VisitTable", "total_row": True,
            "columns": [{"header": "Site", "total_string": "Total"},
                        {"header": "Wait minutes", "total_function": "average"}, {"header": "Follow-up"}],
        })
        for r, row in enumerate(rows, start=1):
            sheet.write_row(r, 0, row)
    return path


def emoji_rtl(path: Path) -> Path:
    """Site labels with emoji and right-to-left scripts, and a header in Arabic."""
    labels = {"Harbour": "מרפאת הנמל 🏥", "Millbrook": "عيادة الطاحونة", "Ashgrove": "Ashgrove 🌳"}
    with new_sheet(path) as (book, sheet):
        sheet.write_row(0, 0, ("Site", "Wait minutes", "المتابعة"))
        for r, (site, wait, follow) in enumerate(visits(), start=1):
            sheet.write_row(r, 0, (labels[site], wait, follow))
    return path


QUOTED_SHEET = "Dr O'Brien's \"visits\""


def quoted_sheet_name(path: Path) -> Path:
    """The data sheet's name holds apostrophes and double quotes."""
    with new_sheet(path, name=QUOTED_SHEET) as (book, sheet):
        sheet.write_row(0, 0, HEADERS)
        for r, row in enumerate(visits(), start=1):
            sheet.write_row(r, 0, row)
    return path


def blank_and_constant(path: Path) -> Path:
    """An all-blank column (header only) and a column holding one value throughout."""
    with new_sheet(path) as (book, sheet):
        sheet.write_row(0, 0, (*HEADERS, "Empty", "Programme"))
        for r, row in enumerate(visits(), start=1):
            sheet.write_row(r, 0, row)
            sheet.write(r, 4, "Outreach")
    return path


def many_labels(path: Path, n: int = 5_000, repeats: int = 4) -> Path:
    """A compare-by column with {n:,} different labels, each on {repeats} rows."""
    with new_sheet(path, constant_memory=True) as (book, sheet):
        sheet.write_row(0, 0, HEADERS)
        rng = np.random.default_rng(5)
        for r in range(1, n * repeats + 1):
            follow = "yes" if rng.random() < 0.6 else "no"
            sheet.write_row(r, 0, (f"Point {r % n:05d}", round(float(rng.normal(33, 6)), 2), follow))
    return path


def mixed_values(path: Path) -> Path:
    """Numbers mixed with text in the outcome: 'NA', '-', '12,5', 'about 30', '<5', numbers stored as text."""
    with new_sheet(path) as (book, sheet):
        sheet.write_row(0, 0, HEADERS)
        odd = {3: "NA", 7: "-", 11: "12,5", 15: "about 30", 19: "<5", 23: "41", 27: "1,250"}
        for r, (site, wait, follow) in enumerate(visits(), start=1):
            sheet.write(r, 0, site)
            if r in odd:
                sheet.write_string(r, 1, odd[r])
            else:
                sheet.write_number(r, 1, wait)
            sheet.write(r, 2, follow)
    return path


def dates_as_text(path: Path) -> Path:
    """Visit dates typed as text in several formats, beside real dates."""
    with new_sheet(path) as (book, sheet):
        sheet.write_row(0, 0, (*HEADERS, "Visit date"))
        date_format = book.add_format({"num_format": "yyyy-mm-dd"})
        texts = ("2026-03-{d:02d}", "{d:02d}/03/2026", "03/{d:02d}/2026", "{d} March 2026", "2026.03.{d:02d}")
        for r, row in enumerate(visits(), start=1):
            sheet.write_row(r, 0, row)
            day = 1 + r % 28
            if r % 3:
                sheet.write_string(r, 3, texts[r % len(texts)].format(d=day))
            else:
                sheet.write_datetime(r, 3, dt.datetime(2026, 3, day), date_format)
    return path


def error_values(path: Path) -> Path:
    """Error values (#N/A, #DIV/0!, #VALUE!) among the waits, as cached formula results."""
    with new_sheet(path) as (book, sheet):
        sheet.write_row(0, 0, HEADERS)
        errors = {4: ("=NA()", "#N/A"), 9: ("=1/0", "#DIV/0!"), 14: ('="a"+1', "#VALUE!")}
        for r, (site, wait, follow) in enumerate(visits(), start=1):
            sheet.write(r, 0, site)
            if r in errors:
                sheet.write_formula(r, 1, errors[r][0], None, errors[r][1])
            else:
                sheet.write_number(r, 1, wait)
            sheet.write(r, 2, follow)
    return path


def uncached_formulas(path: Path) -> Path:
    """The outcome is all formulas saved without values (a script wrote them, no program calculated them)."""
    with new_sheet(path) as (book, sheet):
        sheet.write_row(0, 0, (*HEADERS, "Wait hours"))
        for r, row in enumerate(visits(), start=1):
            sheet.write_row(r, 0, row)
            sheet.write_formula(r, 3, f"=B{r + 1}/60", None, "")
    return path


# ---------------------------------------------------------------- the corpus


def writer_steps() -> tuple[Step, ...]:
    return processed()


CASES: tuple[Case, ...] = (
    # Other writers: every one is processed, numbers formatted as intended, their parts kept.
    Case("openpyxl-etree", "writers", "openpyxl without lxml", lambda p: openpyxl_book(p, lxml=False), processed()),
    Case("openpyxl-lxml", "writers", "openpyxl with lxml (relationships prefix declared on each sheet)",
         lambda p: openpyxl_book(p, lxml=True), processed()),
    Case("pandas-openpyxl", "writers", "pandas to_excel through openpyxl", lambda p: pandas_book(p, engine="openpyxl"),
         processed()),
    Case("pandas-xlsxwriter", "writers", "pandas to_excel through XlsxWriter",
         lambda p: pandas_book(p, engine="xlsxwriter"), processed()),
    Case("libreoffice", "writers", "LibreOffice Calc re-save", libreoffice_resave, processed(), needs_soffice=True),
    Case("dxf-formats", "writers", "number formats only in conditional formats (<dxfs>)", dxf_formats_book,
         processed()),
    Case("x-prefix", "writers", "x: prefix for SpreadsheetML, renamed rel:, ct:, pr: prefixes", prefixed_book,
         processed()),
    Case("calc-chain", "writers", "formulas with a calculation chain", calc_chain_book, processed(),
         carried=("xl/calcChain.xml",)),
    Case("external-link", "writers", "a link to another workbook", external_link_book, processed(),
         carried=("xl/externalLinks/externalLink1.xml", "xl/externalLinks/_rels/externalLink1.xml.rels")),
    Case("pivot", "writers", "a pivot table and its cache", pivot_book, processed(),
         carried=("xl/pivotCache/pivotCacheDefinition1.xml", "xl/pivotCache/pivotCacheRecords1.xml",
                  "xl/pivotTables/pivotTable1.xml", "xl/worksheets/_rels/sheet2.xml.rels")),
    Case("slicer", "writers", "a slicer", slicer_book, processed(),
         carried=("xl/slicerCaches/slicerCache1.xml", "xl/slicers/slicer1.xml", "xl/worksheets/sheet1.xml")),
    Case("threaded-comments", "writers", "threaded comments and their people list", threaded_comments_book,
         processed(), carried=("xl/persons/person.xml", "xl/threadedComments/threadedComment1.xml")),
    Case("strict", "writers", "Strict Open XML (purl.oclc.org namespaces)", strict_book,
         refused(INPUT, "Strict Open XML")),
    # Legacy formats: read; writing says how to convert.
    Case("xls", "legacy", "old Excel 97-2003 .xls", legacy_book,
         (Step(TEST), Step(PLAN, WRITE, "Excel Workbook (.xlsx)"), Step(RUN, WRITE, "Excel Workbook (.xlsx)")),
         needs_soffice=True, extra={"suffix": ".xls"}),
    Case("ods", "legacy", "OpenDocument .ods", legacy_book,
         (Step(TEST), Step(PLAN, WRITE, "Excel Workbook (.xlsx)"), Step(RUN, WRITE, "Excel Workbook (.xlsx)")),
         needs_soffice=True, extra={"suffix": ".ods"}),
    # Not a workbook.
    Case("empty", "not a workbook", "an empty file (0 bytes)", empty_file, refused(INPUT, "is empty")),
    Case("truncated", "not a workbook", "a workbook cut off two thirds of the way", truncated,
         refused(INPUT, "damaged")),
    Case("csv", "not a workbook", "a CSV file renamed .xlsx", csv_renamed, refused(INPUT, "plain text")),
    Case("html", "not a workbook", "a web page renamed .xlsx", html_renamed, refused(INPUT, "plain text")),
    Case("empty-zip", "not a workbook", "a zip with no parts", empty_zip, refused(INPUT, "workbook")),
    Case("zip-of-text", "not a workbook", "a zip holding a text file", zip_of_text, refused(INPUT, "workbook")),
    Case("random", "not a workbook", "random bytes", random_bytes, refused(INPUT, "is not a workbook")),
    Case("encrypted", "not a workbook", "a password-protected workbook", encrypted,
         refused(INPUT, "password-protected")),
    # Hostile.
    Case("xxe-sheet", "hostile", "external entity (XXE) in a sheet", xxe_sheet,
         sheet_refused("declares XML entities")),
    Case("xxe-workbook", "hostile", "external entity (XXE) in the workbook part", xxe_workbook,
         refused(INPUT, "declares XML entities")),
    Case("entity-expansion", "hostile", "nested entity expansion ('billion laughs') in shared strings",
         entity_expansion, refused(INPUT, "declares XML entities")),
    Case("entity-expansion-app", "hostile", "nested entity expansion in document properties",
         entity_expansion_app, processed(), carried=("docProps/app.xml",)),
    Case("bomb-ratio", "hostile", "zip bomb: a part packed 1000 to 1", bomb_ratio, refused(INPUT, "zip bomb")),
    Case("bomb-declared", "hostile", "zip bomb: parts declaring over 4 GiB", bomb_declared,
         refused(INPUT, "would unpack to")),
    Case("bomb-actual", "hostile", "zip bomb: a part inflating past its declared size", bomb_actual,
         sheet_refused("more data than the file declares")),
    Case("traversal", "hostile", "an entry named ../../evil.sh", lambda p: traversal(p, "../../evil.sh"),
         refused(INPUT, "'../../evil.sh'")),
    Case("absolute-name", "hostile", "an entry named /tmp/evil.sh", lambda p: traversal(p, "/tmp/evil.sh"),
         refused(INPUT, "'/tmp/evil.sh'")),
    Case("huge-dimension", "hostile", "a sheet claiming 16,384 x 1,048,576 cells", huge_dimension, processed()),
    Case("stray-far-cell", "hostile", "a stray value in cell XFD1048576", stray_far_cell,
         sheet_refused("delete the stray values")),
    Case("far-cell-hidden", "hostile", "a far cell under a false small dimension", far_cell_hidden,
         sheet_refused("delete the stray values")),
    Case("beyond-grid", "hostile", "a cell beyond XFD1048576", beyond_grid,
         sheet_refused("outside the 16,384 columns")),
    Case("million-strings", "hostile", "a million shared strings", million_strings, processed()),
    Case("500-sheets", "hostile", "500 sheets", many_sheets, processed()),
    Case("long-cells", "hostile", "32,767-character cells and labels", long_cells, processed()),
    Case("deep-nesting", "hostile", "XML nested 100,000 elements deep", deep_nesting, processed()),
    # Awkward but valid.
    Case("title-rows", "awkward", "title rows above the header", title_rows, processed()),
    Case("merged-duplicate-headers", "awkward", "merged and duplicate headers", merged_duplicate_headers,
         processed()),
    Case("excel-table", "awkward", "the data in an Excel table with a totals row", excel_table, processed()),
    Case("emoji-rtl", "awkward", "emoji and right-to-left labels", emoji_rtl, processed()),
    Case("quoted-sheet", "awkward", "quotes and apostrophes in the sheet name", quoted_sheet_name,
         tuple(Step(tuple(QUOTED_SHEET if a == SHEET else a for a in step.args), step.code, step.says)
               for step in processed())),
    Case("5000-labels", "awkward", "5,000 labels in the compare-by column", many_labels,
         processed(Step(TEST, OK, "5,000 different groups, more than the 50"))),
    Case("blank-constant", "awkward", "an all-blank column and a constant column", blank_and_constant, processed()),
    Case("mixed-values", "awkward", "numbers mixed with text", mixed_values, processed()),
    Case("dates-as-text", "awkward", "dates typed as text in several formats", dates_as_text, processed()),
    Case("error-values", "awkward", "error values (#N/A, #DIV/0!, #VALUE!)", error_values, processed()),
    Case("uncached-formulas", "awkward", "formulas saved without values", uncached_formulas, processed()),
)


def make(case: Case, folder: Path) -> Path:
    """Write one case's file into ``folder`` and return its path."""
    suffix = case.extra.get("suffix", ".xlsx")
    path = folder / f"{case.name}{suffix}"
    made = case.make(path)
    return made


def main(argv: Sequence[str]) -> int:
    """Write the corpus into a folder and print what the command line says for each case."""
    from click.testing import CliRunner

    from statmargin.cli import main as cli

    folder = Path(argv[1] if len(argv) > 1 else tempfile.mkdtemp(prefix="statmargin-corpus-"))
    folder.mkdir(parents=True, exist_ok=True)
    for case in CASES:
        if case.needs_soffice and find_soffice() is None:
            print(f"{case.name}: skipped (no LibreOffice)")
            continue
        path = make(case, folder)
        for step in case.steps:
            args = [str(path) if a == "{book}" else a for a in step.args]
            result = CliRunner().invoke(cli, args)
            line = result.stderr.strip().splitlines()[-1] if result.stderr.strip() else "(no message)"
            print(f"{case.group} | {case.name} | {step.args[0]} | exit {result.exit_code} | {line}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv))
