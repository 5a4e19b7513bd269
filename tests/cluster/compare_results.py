#!/usr/bin/python3
"""Compare a merged results.json with a one-machine results.json of the same suite.

Usage: compare_results.py MERGED SINGLE

Results are bitwise the same whatever the sharding (docs/design.md, "Scale"), so everything
must be equal except what describes the run rather than the results: the timestamps
("started", "finished"), the timings (any "wall_seconds" or other "*_seconds" key), the host
facts ("host") and the "shard" field. Exit 0 equal, 1 different (each difference printed as a
JSON pointer), 2 unreadable input.
"""
import json
import sys

RUN_FACTS_TOP = ("started", "finished", "host", "shard")


def strip_timings(value):
    if isinstance(value, dict):
        return {k: strip_timings(v) for k, v in value.items()
                if not (k == "wall_seconds" or k.endswith("_seconds"))}
    if isinstance(value, list):
        return [strip_timings(v) for v in value]
    return value


def core(results):
    for key in RUN_FACTS_TOP:
        results.pop(key, None)
    return strip_timings(results)


def differences(a, b, pointer=""):
    """Yield (pointer, a, b) for every leaf where the two documents differ."""
    if isinstance(a, dict) and isinstance(b, dict):
        for key in sorted(set(a) | set(b)):
            here = pointer + "/" + key.replace("~", "~0").replace("/", "~1")
            if key not in a:
                yield here, "<absent>", b[key]
            elif key not in b:
                yield here, a[key], "<absent>"
            else:
                yield from differences(a[key], b[key], here)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            yield pointer + " (length)", len(a), len(b)
        for i, (x, y) in enumerate(zip(a, b)):
            yield from differences(x, y, f"{pointer}/{i}")
    elif type(a) is not type(b) or a != b:
        yield pointer, a, b


def short(value, limit=160):
    text = json.dumps(value, sort_keys=True)
    return text if len(text) <= limit else text[:limit] + "..."


def main(argv):
    if len(argv) != 3:
        print(__doc__.strip().splitlines()[2], file=sys.stderr)
        return 2
    try:
        with open(argv[1], encoding="utf-8") as f:
            merged = json.load(f)
        with open(argv[2], encoding="utf-8") as f:
            single = json.load(f)
    except (OSError, ValueError) as e:
        print(f"compare_results: cannot read input: {e}", file=sys.stderr)
        return 2

    if merged.get("shard") is not None:
        print(f"compare_results: {argv[1]} has shard {merged.get('shard')!r}, expected null (a merge)",
              file=sys.stderr)
        return 1

    found = list(differences(core(merged), core(single)))
    if not found:
        print(f"merged results equal the one-machine run ({len(single.get('cases', []))} cases)")
        return 0
    print(f"merged results differ from the one-machine run in {len(found)} place(s) "
          f"(left: {argv[1]}, right: {argv[2]}):", file=sys.stderr)
    for pointer, x, y in found[:40]:
        print(f"  {pointer}: {short(x)} != {short(y)}", file=sys.stderr)
    if len(found) > 40:
        print(f"  ... and {len(found) - 40} more", file=sys.stderr)
    tops = sorted({p.split("/")[1].split(" ")[0] for p, _, _ in found if p.count("/") >= 1})
    print(f"  (top-level fields that differ: {', '.join(tops)})", file=sys.stderr)
    return 1


if __name__ == "__main__":
    sys.exit(main(sys.argv))
