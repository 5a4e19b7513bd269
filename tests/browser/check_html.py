#!/usr/bin/env python3
"""Opens a generated report.html with hostile names in headless Chromium: the hostile strings
must show as text, no script may run (the page title stays ours), the console must stay
clean, and a screenshot must render.

usage: check_html.py MAKE_SAMPLE_REPORT CHROMIUM
"""
import html.parser
import os
import pathlib
import subprocess
import sys
import tempfile

IMG = "<img src=x onerror=\"document.title='pwned'\">"
SCRIPT = "<script>document.title='pwned'</script>"
TITLE = "stepgate: browser-sample (fail)"


class Dom(html.parser.HTMLParser):
    """Collects tag names, the text content and the document's <title> (the one in <head>;
    SVG figures have <title> elements of their own for hover text)."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags, self.text, self.title, self._in_title = [], [], "", False

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self._in_title = tag == "title" and "body" not in self.tags

    def handle_endtag(self, tag):
        self._in_title = False

    def handle_data(self, data):
        self.text.append(data)
        if self._in_title:
            self.title += data


def chromium(binary, profile, *args):
    cmd = [binary, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           "--disable-dev-shm-usage", f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=180)


def main():
    make_sample, binary = sys.argv[1], sys.argv[2]
    failures = []
    with tempfile.TemporaryDirectory(prefix="stepgate-html-") as tmp:
        subprocess.run([make_sample, tmp], check=True, capture_output=True)
        report = pathlib.Path(tmp) / "report.html"
        url = report.resolve().as_uri()

        dump = chromium(binary, os.path.join(tmp, "profile-dom"), "--dump-dom", url)
        dom = Dom()
        dom.feed(dump.stdout)
        text = "".join(dom.text)
        if "<html" not in dump.stdout[:200].lower():
            failures.append(f"no DOM dumped (exit {dump.returncode}): {dump.stderr[-2000:]}")
        if dom.title != TITLE:
            failures.append(f"title changed: {dom.title!r}, expected {TITLE!r}")
        if "pwned" in dom.title:
            failures.append("a script ran: the title says pwned")
        for tag in ("script", "img", "iframe", "object", "embed"):
            if tag in dom.tags:
                failures.append(f"a <{tag}> element reached the DOM")
        for hostile in (IMG, SCRIPT):
            if hostile not in text:
                failures.append(f"hostile string not shown as text: {hostile}")
        if dom.tags.count("svg") != 7:
            failures.append(f"expected 7 inline SVG figures (the suite chart and 3 per case), "
                            f"found {dom.tags.count('svg')}")

        shot = pathlib.Path(tmp) / "report.png"
        snap = chromium(binary, os.path.join(tmp, "profile-shot"), f"--screenshot={shot}",
                        "--window-size=1400,2400", "--hide-scrollbars", url)
        size = shot.stat().st_size if shot.exists() else 0
        if size < 20000:
            failures.append(f"screenshot missing or blank ({size} bytes, exit {snap.returncode})")
        keep = os.environ.get("STEPGATE_KEEP_SCREENSHOT")
        if keep and shot.exists():
            pathlib.Path(keep).write_bytes(shot.read_bytes())

        for name, run in (("dump-dom", dump), ("screenshot", snap)):
            for line in run.stderr.splitlines():
                if "Uncaught" in line or "ERROR:CONSOLE" in line or ":CONSOLE(" in line:
                    failures.append(f"console message ({name}): {line}")

    if failures:
        print("\n".join(failures))
        return 1
    print(f"report.html: hostile names shown as text, title unchanged, no console error, screenshot {size} bytes")
    return 0


if __name__ == "__main__":
    sys.exit(main())
