"""A bounded mutation fuzzer for workbooks: damaged files must get one line, never an internal error or a hang.

Mutations of a small valid workbook (invented visits, roles planned):

* ``flip``: a few bytes of the file set to random values;
* ``truncate``: the file cut at a random length;
* ``delete``: one or more zip entries removed (the zip stays valid);
* ``xml``: one XML part edited (an element deleted, doubled or renamed, an
  attribute emptied or set to an odd value, a cell reference or shared-string
  index out of range, stray markup, a DOCTYPE, a cut) and zipped again with a
  valid checksum, so the damage reaches the XML readers;
* ``zip``: a directory field changed (a declared size, a checksum, the
  compression method, a name).

Every case is deterministic given its seed. ``test_fuzz.py`` runs a few hundred
in the test suite; run it by hand for longer, in separate processes (so a
crash or a hang of a reading library is caught too)::

    python tests/fuzz_workbooks.py --minutes 30 --workers 2 --seed 1 --keep /tmp/fuzz-failures

It prints the counts of each outcome and keeps every failing input.
"""

from __future__ import annotations

import argparse
import collections
import hashlib
import os
import random
import re
import subprocess
import sys
import tempfile
import time
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import xlsxwriter

from statmargin.io.file.zipio import ZipEntry, new_entry, read_zip, write_zip

KINDS = ("flip", "truncate", "delete", "xml", "zip")
COMMANDS = (
    ("run", "{book}", "--quiet"),
    ("test", "{book}", "--outcome", "Wait", "--by", "Site"),
    ("plan", "{book}"),
)
ALLOWED_EXITS = {0, 2, 3, 4}  # success, input, locked, write (errors.EXIT_CODES); 70 is a bug
HANG_SECONDS = 60
FUZZ_ROWS = 12

_ODD_VALUES = ("", "-1", "0", "4294967296", "1e308", "NaN", "A0", "XFD1048577", "ZZZZ1", "&amp;&lt;", "x" * 5000,
               "\u202e\U0001f600", "1048577", "99999999999999999999")


def small_book(path: Path) -> Path:
    """A tiny invented workbook with roles picked, so a run goes all the way through."""
    from click.testing import CliRunner

    from statmargin.cli import main

    book = xlsxwriter.Workbook(str(path))
    sheet = book.add_worksheet("Data")
    sheet.write_row(0, 0, ["Site", "Wait"])
    for i in range(FUZZ_ROWS):
        sheet.write_row(i + 1, 0, ["North" if i % 2 else "South", 20.0 + 3 * i + (i % 3)])
    sheet.write_formula(FUZZ_ROWS + 2, 1, f"=AVERAGE(B2:B{FUZZ_ROWS + 1})", None, 37.0)
    book.close()
    result = CliRunner().invoke(main, ["plan", str(path), "--outcome", "Wait", "--by", "Site"])
    if result.exit_code != 0:
        raise RuntimeError(result.stderr)
    return path


# ---------------------------------------------------------------- mutations


def mutate(data: bytes, kind: str, rng: random.Random) -> bytes:
    """One mutation of the given kind, drawn with ``rng``."""
    return _MUTATORS[kind](data, rng)


def _flip(data: bytes, rng: random.Random) -> bytes:
    out = bytearray(data)
    for _ in range(rng.randint(1, 8)):
        out[rng.randrange(len(out))] = rng.randrange(256)
    return bytes(out)


def _truncate(data: bytes, rng: random.Random) -> bytes:
    return data[: rng.randrange(len(data))]


def _delete(data: bytes, rng: random.Random) -> bytes:
    entries = read_zip(data)
    for _ in range(rng.randint(1, 3)):
        if entries:
            entries.pop(rng.randrange(len(entries)))
    return write_zip(entries)


def _zip_field(data: bytes, rng: random.Random) -> bytes:
    entries = read_zip(data)
    entry = entries[rng.randrange(len(entries))]
    change = rng.choice(("size", "crc", "method", "name", "duplicate"))
    if change == "size":
        entry.size = rng.choice((0, 1, entry.size // 2, entry.size + 1, entry.size * 1000, 0xFFFFFFFE))
    elif change == "crc":
        entry.crc ^= 1 << rng.randrange(32)
    elif change == "method":
        entry.method = rng.choice((1, 9, 12, 14, 99))
    elif change == "name":
        entry.name = rng.choice((entry.name.upper(), entry.name + "x", "../" + entry.name, entry.name.replace("/", "\\")))
    else:
        entries.append(ZipEntry(**{**entry.__dict__}))
        return _write_allowing_duplicates(entries)
    return write_zip(entries)


def _write_allowing_duplicates(entries: list[ZipEntry]) -> bytes:
    """write_zip refuses repeated names; write the repeat under a placeholder and patch the name bytes."""
    last = entries[-1]
    original = last.name
    placeholder = "\x01" * len(original.encode("utf-8"))
    last.name = placeholder
    blob = write_zip(entries)
    return blob.replace(placeholder.encode("utf-8"), original.encode("utf-8"))


_ELEMENT = re.compile(rb"<([A-Za-z][\w:.-]*)\b[^>]*?(?:/>|>(?:(?!<\1\b).)*?</\1>)", re.S)
_ATTRIBUTE = re.compile(rb'(\s[\w:.-]+=")([^"]*)(")')


def _xml(data: bytes, rng: random.Random) -> bytes:
    entries = read_zip(data)
    xml_parts = [i for i, e in enumerate(entries) if e.name.endswith((".xml", ".rels"))]
    index = rng.choice(xml_parts)
    text = entries[index].data()
    for _ in range(rng.randint(1, 3)):
        text = _xml_edit(text, rng)
    entries[index] = new_entry(entries[index].name, text)
    return write_zip(entries)


def _xml_edit(text: bytes, rng: random.Random) -> bytes:
    change = rng.choice(("delete", "double", "rename", "attribute", "reference", "index", "stray", "doctype", "cut"))
    elements = list(_ELEMENT.finditer(text))
    if change in ("delete", "double", "rename") and elements:
        found = rng.choice(elements)
        start, end = found.span()
        if change == "delete":
            return text[:start] + text[end:]
        if change == "double":
            return text[:end] + text[start:end] + text[end:]
        name = found.group(1)
        new = rng.choice((b"x", name + b"x", b"row", b"c", b"sheet", b"definedName"))
        piece = re.sub(rb"^<" + re.escape(name), b"<" + new, text[start:end])
        piece = re.sub(rb"</" + re.escape(name) + rb">$", b"</" + new + b">", piece)
        return text[:start] + piece + text[end:]
    if change in ("attribute", "reference", "index"):
        if change == "reference":
            pattern = re.compile(rb'(\s(?:r|ref|sqref|localSheetId|sheetId|activeTab)=")([^"]*)(")')
        elif change == "index":
            pattern = re.compile(rb'(\s(?:s|numFmtId|fontId|xfId|t)=")([^"]*)(")')
        else:
            pattern = _ATTRIBUTE
        found_attrs = list(pattern.finditer(text))
        if found_attrs:
            found = rng.choice(found_attrs)
            value = rng.choice(_ODD_VALUES).encode("utf-8")
            return text[: found.start(2)] + value + text[found.end(2) :]
    if change == "stray":
        at = rng.randrange(len(text) + 1)
        return text[:at] + rng.choice((b"<", b"&", b"\x00", b"</x>", b"<![CDATA[", b"]]>", b"\xff\xfe", b"&#0;")) + text[at:]
    if change == "doctype":
        head, sep, rest = text.partition(b"?>")
        entity = b'<!DOCTYPE x [<!ENTITY e SYSTEM "file:///etc/hostname"><!ENTITY l "lol">]>'
        body = rest.replace(b"<v>", b"<v>&e;", 1) if rng.random() < 0.5 else rest
        return head + sep + entity + body if sep else entity + text
    return text[: rng.randrange(len(text) + 1)]


_MUTATORS: dict[str, Callable[[bytes, random.Random], bytes]] = {
    "flip": _flip,
    "truncate": _truncate,
    "delete": _delete,
    "xml": _xml,
    "zip": _zip_field,
}


def case(master: bytes, seed: int) -> tuple[str, bytes]:
    """The mutated workbook for one seed: its kind and bytes (the same seed always gives the same case)."""
    rng = random.Random(seed)
    kind = KINDS[seed % len(KINDS)]
    return kind, mutate(master, kind, rng)


# ---------------------------------------------------------------- judging one run


def judge(code: int | None, stdout: str, stderr: str, before: str, after: str | None, folder_ok: bool) -> str | None:
    """What went wrong with one command on a mutated file, or None when it behaved.

    ``code`` is None for a hang. A refusal must be one line on standard error
    and leave the file byte-identical; no command may leave a stray file.
    """
    if code is None:
        return f"hang over {HANG_SECONDS} s"
    if "Traceback" in stdout + stderr:
        return "traceback"
    if code not in ALLOWED_EXITS:
        return f"exit {code}"
    if code != 0:
        lines = stderr.splitlines()
        if len(lines) != 1 or not lines[0].startswith("statmargin: "):
            return "not one line"
        if after != before:
            return "refused but the file changed"
    if not folder_ok:
        return "stray file left"
    return None


def sha(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


# ---------------------------------------------------------------- the long run by hand


def _one_subprocess(master: bytes, seed: int, keep: Path | None) -> tuple[str, str, list[str]]:
    """Run every command on one case in separate processes; returns (kind, outcome word, problems)."""
    kind, data = case(master, seed)
    problems: list[str] = []
    outcome = "processed"
    with tempfile.TemporaryDirectory(prefix="statmargin-fuzz-") as folder:
        path = Path(folder) / "fuzzed.xlsx"
        for command in COMMANDS:
            path.write_bytes(data)
            args = [str(path) if a == "{book}" else a for a in command]
            try:
                done = subprocess.run([sys.executable, "-m", "statmargin", *args], capture_output=True, text=True,
                                      timeout=HANG_SECONDS, check=False)
                code, stdout, stderr = done.returncode, done.stdout, done.stderr
            except subprocess.TimeoutExpired:
                code, stdout, stderr = None, "", ""
            after = sha(path.read_bytes()) if path.exists() else None
            folder_ok = sorted(p.name for p in Path(folder).iterdir()) == [path.name]
            problem = judge(code, stdout, stderr, sha(data), after, folder_ok)
            if problem:
                problems.append(f"{command[0]}: {problem}")
            elif code != 0:
                outcome = "refused"
        if problems and keep is not None:
            keep.mkdir(parents=True, exist_ok=True)
            (keep / f"seed-{seed}-{kind}.xlsx").write_bytes(data)
    return kind, outcome, problems


def main(argv: list[str] | None = None) -> int:
    """Fuzz for a while in separate processes and print what happened."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--minutes", type=float, default=30.0)
    parser.add_argument("--workers", type=int, default=os.cpu_count() or 1)
    parser.add_argument("--seed", type=int, default=1, help="first seed; cases use consecutive seeds")
    parser.add_argument("--keep", type=Path, default=None, help="folder for failing inputs")
    options = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as folder:
        master = small_book(Path(folder) / "small.xlsx").read_bytes()
    deadline = time.monotonic() + options.minutes * 60
    counts: collections.Counter[tuple[str, str]] = collections.Counter()
    problems: list[str] = []
    started = time.monotonic()
    seed = options.seed
    with ThreadPoolExecutor(max_workers=options.workers) as pool:
        while time.monotonic() < deadline:
            batch = range(seed, seed + 4 * options.workers)
            seed = batch.stop
            for (kind, outcome, found), case_seed in zip(pool.map(lambda s: _one_subprocess(master, s, options.keep), batch), batch, strict=True):
                counts[(kind, "problem" if found else outcome)] += 1
                problems.extend(f"seed {case_seed} ({kind}): {p}" for p in found)
    total = sum(counts.values())
    print(f"{total} cases ({total * len(COMMANDS)} commands) in {(time.monotonic() - started) / 60:.1f} minutes, "
          f"seeds {options.seed}..{seed - 1}")
    for kind in KINDS:
        row = {o: counts[(kind, o)] for o in ("processed", "refused", "problem")}
        print(f"  {kind:9s} processed {row['processed']:5d}  refused {row['refused']:5d}  problems {row['problem']}")
    for line in problems:
        print("  " + line)
    return 1 if problems else 0


if __name__ == "__main__":
    raise SystemExit(main())
