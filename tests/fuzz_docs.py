"""Seeded generator of malformed findings documents, tidy cohort rows and cohort files, shared by
tests/test_fuzz.py and benchmarks/bench_fuzz.py.

Each document starts from a valid one (the invented demo cases and simulated lesions) and gets one to three
mutations: a value or key replaced by a hostile one (huge or unicode digits, NaN, long text, deep nesting, wrong
types), a key dropped, a container swapped for a scalar, or the JSON text itself damaged. A document is handed to
the reader in one of its forms: a dict, JSON text, bytes, or a file (`pathlib.Path`).
"""
from __future__ import annotations

import copy
import json
import random

from cordmap import demo
from cordmap.lesions import Lesion
from cordmap.simulate import simulate


def _nested(depth: int, kind: str = "list"):
    v: object = 0
    for _ in range(depth):
        v = [v] if kind == "list" else {"a": v}
    return v


HOSTILE = [
    None, True, False, 0, -1, 6, 3.0, 2.5, float("nan"), float("inf"), -0.0, 10 ** 5000, -(10 ** 400), "",
    " ", "NT", "nt", "²", "٣", "５", "1e3", "0x3", "normal ", "ABSENT", "brisk\n", "x" * 10_000, "\x00",
    "\u202e", "T13", "C1", "S4-5", "L1-T10", "T10-L1", "T12-S4-5", "C2-", "-", "left", "both", "<b>x</b>",
    [], {}, [1, 2], {"left": {}}, {"left": {"L2": 3}}, _nested(50), _nested(3000), _nested(3000, "dict"),
    "cordmap-findings/1", "cordmap-findings/2", "chronic", "acute", "retention", "extensor", 4, 5, 2,
]
KEYS = ["format", "label", "phase", "sensory", "motor", "reflexes", "signs", "pinprick", "light_touch", "left",
        "right", "L2", "S1", "T10", "knee", "plantar", "horner", "bladder", "colour", "", "x" * 5000, "²", "T13"]
TEXT_DAMAGE = ["[" * 100_000, "{" * 50_000, "1" * 5000, "-" + "9" * 4400, '{"format": ' + "1" * 5000 + "}",
               '"a string"', "null", "true", "[]", "2024-exam.json", "\ufeff{}", "{\"a\": NaN}", "\x00\x01",
               "{\"format\": \"cordmap-findings/1\", \"motor\": {\"left\": {\"L2\": 1" + "0" * 4400 + "}}}"]


def valid_documents() -> list[dict]:
    docs = [demo.case(n).to_dict() for n in demo.names()]
    for les in (Lesion("complete", "both", "T8"), Lesion("hemisection", "left", "C5"),
                Lesion("central", "both", "C4", "C7"), Lesion("root", "right", "L5"),
                Lesion("complete", "both", "C5", phase="acute")):
        docs.append(simulate(les).to_dict())
    return docs


def _paths(obj, prefix=()):
    """The key path of every value in a JSON tree (objects only, at most six deep), the root first."""
    yield prefix
    if isinstance(obj, dict) and len(prefix) < 6:
        for k, v in obj.items():
            yield from _paths(v, (*prefix, k))


def _get(obj, path):
    for k in path:
        obj = obj[k]
    return obj


def mutate(doc: dict, rng: random.Random) -> dict:
    doc = copy.deepcopy(doc)
    for _ in range(rng.randint(1, 3)):
        paths = list(_paths(doc))
        path = rng.choice(paths)
        op = rng.random()
        if not path:
            if op < 0.5:
                doc[rng.choice(KEYS)] = rng.choice(HOSTILE)
            continue
        parent = _get(doc, path[:-1])
        if not isinstance(parent, dict):
            continue
        key = path[-1]
        if op < 0.55:
            parent[key] = rng.choice(HOSTILE)
        elif op < 0.7:
            del parent[key]
        elif op < 0.85:
            parent[rng.choice(KEYS)] = parent.pop(key)
        else:
            parent[rng.choice(KEYS)] = rng.choice(HOSTILE)
    return doc


def documents(n: int, seed: int = 13):
    """Yield (form, value): form is 'dict', 'text', 'bytes' or 'path-text' (the text a file would hold)."""
    rng = random.Random(seed)
    base = valid_documents()
    for _ in range(n):
        r = rng.random()
        doc = mutate(rng.choice(base), rng) if r < 0.9 else rng.choice(base)
        form = rng.choice(["dict", "text", "text", "bytes", "path-text"])
        if form == "dict":
            yield form, doc
            continue
        try:
            text = json.dumps(doc)
        except (ValueError, RecursionError):
            text = rng.choice(TEXT_DAMAGE)
        if rng.random() < 0.15:
            text = rng.choice(TEXT_DAMAGE)
        elif rng.random() < 0.1 and len(text) > 2:
            cut = rng.randrange(1, len(text))
            text = text[:cut] + rng.choice(["", "}", "\"", "\\", "\ud800", "é"]) + text[cut + 1:]
        if form == "bytes":
            yield form, text.encode("utf-8", errors="surrogatepass") + (b"\xff" if rng.random() < 0.05 else b"")
        else:
            yield form, text


TIDY_HOSTILE = ["", " ", "²", "٣", "1" * 5000, "x" * 10_000, "NaN", "-1", "6", "T13", "S4-5", "L1-T10", "both",
                "acute", "later", "true", "maybe", "\x00", "normal", "absent", "0", "2", "4", "brisk", "NT"]


def tidy_case(rng: random.Random, base: list[dict]) -> list[dict]:
    """Rows of one exam in the tidy form, with hostile cells and, sometimes, two rows that disagree."""
    doc = rng.choice(base)
    from cordmap.findings import parse

    rows = parse(doc).tidy().to_dict("records")
    if rng.random() < 0.3:
        rows.append({"exam": "phase", "name": "", "side": "", "segment": "", "value": rng.choice(["chronic", "acute"])})
    for _ in range(rng.randint(0, 3)):
        r = rng.random()
        if r < 0.5 and rows:
            row = rng.choice(rows)
            row[rng.choice(["exam", "name", "side", "segment", "value"])] = rng.choice(TIDY_HOSTILE)
        elif r < 0.8 and rows:
            dup = dict(rng.choice(rows))
            dup["value"] = rng.choice(TIDY_HOSTILE)
            rows.append(dup)
        elif rows:
            rows.pop(rng.randrange(len(rows)))
    return rows


def file_bytes(value) -> bytes:
    """A fuzzed document (dict, text or bytes) as the bytes of a file (a dict too deep for JSON: deep brackets)."""
    if isinstance(value, dict):
        try:
            value = json.dumps(value)
        except (ValueError, RecursionError):
            value = "[" * 10_000
    return value if isinstance(value, bytes) else value.encode("utf-8", errors="surrogatepass")
