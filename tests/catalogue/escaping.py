#!/usr/bin/python3
"""Every string is escaped for the format it is written into.

Usage: escaping.py STEPGATE SOURCE_DIR

A results file comes from other hands like any input. This test runs the tiny catalogue suite
once, then puts one hostile string into each free-text field of its results.json in turn (case
ids, problem and data set names, run reasons, errors, host and tool facts, theory rule, suite
name and path, ...) and runs `report` and `check` on it. For each field the reader either
refuses the value (exit 2, a message naming the field's JSON pointer, no control byte raw in
the message), or every output stays well-formed and inert:
  - report.html: the hostile markup never appears as markup (no added tag, comment end or
    entity), and the page has as many <script> and <a> tags as the clean page;
  - junit.xml: parses as XML (a control byte cannot even be written as a character reference
    in XML 1.0);
  - report.md: every table row has its header's cell count (no raw newline or pipe), no raw HTML
    outside fenced code blocks (a failed run's stderr is shown verbatim in one, whose fence no
    line inside can close);
  - stdout and stderr: no ESC, CR, NUL or other control byte that would drive a terminal.
Exit 1 with one line per problem if any field breaks its format.
"""
import copy
import html.parser
import importlib.util
import json
import re
import shutil
import sys
import tempfile
import xml.etree.ElementTree as ET
from pathlib import Path

# Markup of four formats, a terminal escape, control bytes, a C1 control and a line break.
HOSTILE = ("<script>alert(1)</script><a href=x>&amp;\"'|`*_[x](y)]]>--><!--"
           "\n\r\t\x1b[31mRED\x00\x01\x7f\u0085\u2028end")
CONTROL = re.compile(r"[\x00-\x08\x0b-\x1f\x7f]")


class Tags(html.parser.HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags = {}
        self.comments = 0

    def handle_starttag(self, tag, attrs):
        self.tags[tag] = self.tags.get(tag, 0) + 1

    def handle_comment(self, data):
        self.comments += 1


def html_shape(text):
    p = Tags()
    p.feed(text)
    return p.tags, p.comments


def md_tables_split(text):
    """Rows whose cell count differs from their table's header: a newline or a pipe got in."""
    bad, width = [], None
    # Only LF ends a Markdown line here; str.splitlines would also split at U+2028 and U+0085.
    for line in text.split("\n"):
        if not line.startswith("|"):
            width = None
            continue
        cells = line.count("|") - line.count("\\|")
        if width is None:
            width = cells
        elif cells != width:
            bad.append(line[:80])
    return bad


def outside_code_blocks(text):
    """report.md without its fenced code blocks (CommonMark: a block opened by N backticks ends
    only at a line of at least N backticks and nothing else); None when a block is left open."""
    out, fence = [], None
    for line in text.split("\n"):
        stripped = line.strip()
        if fence is None:
            m = re.match(r"^ {0,3}(`{3,})", line)
            if m:
                fence = m.group(1)
                continue
            out.append(line)
        elif re.fullmatch(r"`+", stripped) and len(stripped) >= len(fence) and len(line) - len(line.lstrip(" ")) <= 3:
            fence = None
    return None if fence is not None else "\n".join(out)


def with_failed_run(doc):
    """The first run of the first case as a failed command run, so that its reason, stderr,
    command and request are fields too (the tiny suite's runs do not fail)."""
    run = doc["cases"][0]["runs"][0]
    run.update({"outcome": "failed", "reason": "the program exited with status 1",
                "stderr": "Traceback (most recent call last):\n  File \"<string>\", line 1\n"
                          "ModuleNotFoundError: No module named 'torch'",
                "command": ["/usr/bin/python3", "train.py", "--lr", "0.1"],
                "request": "{\"run\": 1, \"rate\": 0.1}"})
    return doc


def string_paths(doc, prefix=""):
    """JSON pointers of every string value, arrays cut to their first two elements."""
    if isinstance(doc, dict):
        for k, v in doc.items():
            yield from string_paths(v, f"{prefix}/{k}")
    elif isinstance(doc, list):
        for i, v in enumerate(doc[:2]):
            yield from string_paths(v, f"{prefix}/{i}")
    elif isinstance(doc, str):
        yield prefix


def put(doc, pointer, value):
    keys = pointer.split("/")[1:]
    node = doc
    for k in keys[:-1]:
        node = node[int(k)] if isinstance(node, list) else node[k]
    last = keys[-1]
    if isinstance(node, list):
        node[int(last)] = value
    else:
        node[last] = value


def main(argv):
    if len(argv) != 2:
        print(__doc__.strip().splitlines()[2], file=sys.stderr)
        return 2
    stepgate, source = argv[0], Path(argv[1])
    spec = importlib.util.spec_from_file_location("catalogue", Path(__file__).with_name("catalogue.py"))
    cat = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(cat)
    cat.SRC, cat.BIN = source, str(Path(stepgate).resolve())

    root = Path(tempfile.mkdtemp(prefix="stepgate-escaping-"))
    problems, refused, written = [], 0, 0
    try:
        (root / "suite.json").write_text(json.dumps(cat.tiny_suite(), indent=1))
        for argv_ in (["run", "suite.json", "--out", "out", "--quiet", "--jobs", "2"],
                      ["accept", "out/results.json", "--baseline", "base.json"]):
            code, _, err, _, _ = cat.run_binary(argv_, root)
            if code != 0:
                print(f"setup: stepgate {' '.join(argv_)} exited {code}: {err.strip()[:300]}")
                return 1
        clean = with_failed_run(json.loads((root / "out" / "results.json").read_text()))
        (root / "clean.json").write_text(json.dumps(clean))
        code, _, _, _, _ = cat.run_binary(["report", "clean.json", "--out", "clean"], root)
        clean_html = html_shape((root / "clean" / "report.html").read_text())

        pointers = sorted(set(string_paths(clean)))
        for pointer in pointers:
            doc = copy.deepcopy(clean)
            put(doc, pointer, HOSTILE)
            d = root / "field"
            shutil.rmtree(d, ignore_errors=True)
            d.mkdir()
            (d / "r.json").write_text(json.dumps(doc))
            shutil.copy(root / "base.json", d / "base.json")
            outputs = []
            for argv_ in (["report", "r.json", "--out", "rep"], ["check", "r.json", "--baseline", "base.json"]):
                code, out, err, _, _ = cat.run_binary(argv_, d)
                outputs.append(code)
                for stream, text in (("stdout", out), ("stderr", err)):
                    if CONTROL.search(text.replace("\n", "").replace("\t", "")):
                        problems.append(f"{pointer}: `{argv_[0]}` wrote a raw control byte to {stream}")
                if code == 2:
                    if not re.search(r"(r|base)\.json[#:]", err):
                        problems.append(f"{pointer}: `{argv_[0]}` refused it without naming the place: {err[:200]}")
                elif code not in (0, 1):
                    problems.append(f"{pointer}: `{argv_[0]}` exited {code}: {err[:200]}")
            if outputs[0] == 2:
                refused += 1
                continue
            written += 1
            rep = d / "rep"
            page = (rep / "report.html").read_text()
            tags, comments = html_shape(page)
            for tag in ("script", "a", "style", "img", "iframe"):
                if tags.get(tag, 0) != clean_html[0].get(tag, 0):
                    problems.append(f"{pointer}: report.html has {tags.get(tag, 0)} <{tag}> tags, "
                                    f"the clean report {clean_html[0].get(tag, 0)}")
            if comments != clean_html[1]:
                problems.append(f"{pointer}: report.html has {comments} comments, the clean report {clean_html[1]}")
            if "<script>alert" in page or "\x1b" in page:
                problems.append(f"{pointer}: report.html holds the hostile text raw")
            try:
                ET.parse(rep / "junit.xml")
            except ET.ParseError as e:
                problems.append(f"{pointer}: junit.xml is not well-formed XML: {e}")
            md_all = (rep / "report.md").read_text()
            md = outside_code_blocks(md_all)
            if md is None:
                problems.append(f"{pointer}: report.md leaves a code block open")
                md = md_all
            if "<script>" in md or "\x1b" in md_all or "\x00" in md_all:
                problems.append(f"{pointer}: report.md holds raw markup or control bytes")
            if md_tables_split(md):
                problems.append(f"{pointer}: report.md has a table row split: {md_tables_split(md)[0]!r}")
    finally:
        shutil.rmtree(root, ignore_errors=True)

    for p in problems:
        print("FAIL", p)
    print(f"{len(pointers)} string fields of results.json given a hostile value: {refused} refused "
          f"with exit 2, {written} reported; {len(problems)} problems")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
