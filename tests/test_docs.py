"""The user documentation against the code it describes.

* docs/study-file.md lists, under a heading naming each study table (``[facility]``,
  ``[[uncertain]]``, ``[facility.humidity]``, ...), a table whose first column is headed "key":
  those keys must be exactly the keys the study readers accept (``simunc.study.keys.SECTION_KEYS``);
  its ``perturbs`` table must list exactly the quantities an input can perturb
  (``simunc.study.catalogue.TARGETS``) and its fluid table exactly the working fluids
  (``simunc.physics.fluids.FLUIDS``).
* docs/results-json.md holds the results.json schema as an indented listing: the keys it documents
  must be exactly the keys ``results_dict`` writes for the demo study, at every level the listing
  spells out.
* Relative links in README.md and docs/*.md point to files that exist.
"""

from __future__ import annotations

import dataclasses
import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
DOCS = ROOT / "docs"
STUDY_FILE_DOC = DOCS / "study-file.md"
RESULTS_DOC = DOCS / "results-json.md"
DEMO = ROOT / "studies" / "arven_cruise.toml"

IDENTIFIER = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")
# A heading names a study table when it holds a code span such as `[facility]` or `[[uncertain]]`.
TABLE_SPAN = re.compile(r"^\[\[?([A-Za-z_][A-Za-z0-9_.<>]*)\]\]?$")


# ---------------------------------------------------------------------------------------------
# Markdown helpers


def _cells(line: str) -> list[str]:
    """Cells of a Markdown table row (``\\|`` inside a cell is not a separator)."""
    body = line.strip()
    body = body[1:] if body.startswith("|") else body
    body = body[:-1] if body.endswith("|") and not body.endswith("\\|") else body
    return [c.strip() for c in re.split(r"(?<!\\)\|", body)]


def _spans(text: str) -> list[str]:
    return re.findall(r"`([^`]*)`", text)


def _heading_section(title: str) -> str | None:
    """The study table a heading names ("" for the top level), or None for another heading."""
    for span in _spans(title):
        m = TABLE_SPAN.match(span.strip())
        if m:
            return m.group(1)
    if title.strip().lower().startswith("top level"):
        return ""
    return None


def markdown_tables(text: str) -> list[dict]:
    """Every table outside code fences: heading section, header cells, rows of cells, line."""
    tables, section, in_fence = [], None, False
    lines = text.splitlines()
    i = 0
    while i < len(lines):
        line = lines[i]
        if line.lstrip().startswith("```"):
            in_fence = not in_fence
            i += 1
            continue
        if in_fence:
            i += 1
            continue
        m = re.match(r"^#{1,6}\s+(.*)$", line)
        if m:
            section = _heading_section(m.group(1))
            i += 1
            continue
        if line.lstrip().startswith("|"):
            start = i
            rows = []
            while i < len(lines) and lines[i].lstrip().startswith("|"):
                rows.append(_cells(lines[i]))
                i += 1
            body = [r for r in rows[1:] if not all(re.fullmatch(r":?-+:?", c) for c in r)]
            tables.append({"section": section, "header": rows[0], "rows": body, "line": start + 1})
            continue
        i += 1
    return tables


def documented_keys(text: str) -> tuple[dict[str, set], list[str]]:
    """Section -> keys of its key tables, and the problems found while reading them."""
    keys: dict[str, set] = {}
    problems = []
    for t in markdown_tables(text):
        if t["header"][0].strip().lower() != "key":
            continue
        if t["section"] is None:
            problems.append(f"line {t['line']}: a key table under a heading that names no study "
                            "table")
            continue
        found = keys.setdefault(t["section"], set())
        for row in t["rows"]:
            spans = _spans(row[0])
            if not spans:
                problems.append(f"line {t['line']}: key cell without a `key`: {row[0]!r}")
            for span in spans:
                if not IDENTIFIER.fullmatch(span.strip()):
                    problems.append(f"[{t['section']}]: key cell {row[0]!r} holds {span!r}, not a "
                                    "bare key name")
                else:
                    found.add(span.strip())
    return keys, problems


def first_column_names(text: str, header: str) -> set[str]:
    """Code-span names in the first column of every table whose first header cell is ``header``."""
    names = set()
    for t in markdown_tables(text):
        if t["header"][0].strip() == header:
            for row in t["rows"]:
                names.update(s.strip() for s in _spans(row[0]))
    return names


# ---------------------------------------------------------------------------------------------
# The parsers themselves, on small made-up documents (so a broken parser cannot pass silently)


def test_markdown_key_table_parser_reads_sections_and_keys():
    text = "\n".join([
        "# Reference", "",
        "## Top level (keys outside any table)", "",
        "| key | meaning |", "|---|---|", "| `title`, `description` | text |", "",
        "## `[facility]` — the facility", "",
        "| key | meaning | default |", "|---|---|---|",
        "| `gas` *or* `fluid` | a \\| b | `\"dry_air\"` |", "",
        "```toml", "# not a heading", "[run]", "```", "",
        "| fluid | kind |", "|---|---|", "| `dry_air` | gas |", "",
        "### `[[uncertain.grades]]` — grades", "",
        "| key | meaning |", "|---|---|", "| `price` | the price |", "",
        "### Notes", "",
        "| key | meaning |", "|---|---|", "| `stray` | under no table heading |", "",
        "## `[match.<group>]`", "",
        "| key | meaning |", "|---|---|", "| `custom.<name> = {}` | not bare |",
    ])
    keys, problems = documented_keys(text)
    assert keys == {"": {"title", "description"}, "facility": {"gas", "fluid"},
                    "uncertain.grades": {"price"}, "match.<group>": set()}
    assert len(problems) == 2
    assert "names no study table" in problems[0] and "not a bare key name" in problems[1]
    assert first_column_names(text, "fluid") == {"dry_air"}


# ---------------------------------------------------------------------------------------------
# a) study keys, perturbable quantities and fluids


def test_study_file_documents_exactly_the_accepted_keys():
    from simunc.study.keys import SECTION_KEYS

    keys, problems = documented_keys(STUDY_FILE_DOC.read_text())
    lines = list(problems)
    for section in sorted(set(SECTION_KEYS) | set(keys)):
        name = f"[{section}]" if section else "top level"
        if section not in keys:
            lines.append(f"{name}: no key table in docs/study-file.md (keys accepted: "
                         f"{', '.join(sorted(SECTION_KEYS[section]))})")
            continue
        if section not in SECTION_KEYS:
            lines.append(f"{name}: documented, but no reader has such a table (keys documented: "
                         f"{', '.join(sorted(keys[section]))})")
            continue
        missing = set(SECTION_KEYS[section]) - keys[section]
        extra = keys[section] - set(SECTION_KEYS[section])
        if missing:
            lines.append(f"{name}: accepted but not documented: {', '.join(sorted(missing))}")
        if extra:
            lines.append(f"{name}: documented but not accepted: {', '.join(sorted(extra))}")
    assert not lines, "docs/study-file.md against the study readers:\n" + "\n".join(lines)


def test_study_file_lists_every_perturbable_quantity():
    from simunc.study.catalogue import TARGETS

    documented = first_column_names(STUDY_FILE_DOC.read_text(), "`perturbs`")
    missing = sorted(set(TARGETS) - documented)
    extra = sorted(documented - set(TARGETS))
    assert not missing and not extra, (f"perturbs table of docs/study-file.md: missing {missing}, "
                                       f"not perturbable {extra}")


def test_study_file_lists_every_working_fluid():
    from simunc.physics.fluids import FLUIDS

    documented = first_column_names(STUDY_FILE_DOC.read_text(), "fluid")
    missing = sorted(set(FLUIDS) - documented)
    extra = sorted(documented - set(FLUIDS))
    assert not missing and not extra, (f"fluid table of docs/study-file.md: missing {missing}, "
                                       f"unknown fluids {extra}")


# ---------------------------------------------------------------------------------------------
# b) results.json against its documented schema
#
# The listing in docs/results-json.md: a name at column 0 is a top-level key (its value text
# follows on the line); a line indented by exactly two spaces names keys of the object above it
# (several names may be comma-separated); deeper-indented lines continue the entry above.
# In value text, ``{a, b: ..., c}`` is an object, ``[{...}]`` a list of objects; anything else is
# a leaf.  A key in quotes is literal; ``<...>`` inside a key stands for any text (``<output>``,
# ``ST_<output>``); an unquoted key of several words is a placeholder for any key.


class Leaf:
    pass


@dataclasses.dataclass
class Obj:
    keys: dict  # documented key -> node


@dataclasses.dataclass
class ListOf:
    item: object


_OPEN, _CLOSE = "{[(", "}])"


def _scan(text: str):
    """(index, char, depth before char) for characters outside double-quoted strings."""
    depth, quoted = 0, False
    for i, ch in enumerate(text):
        if ch == '"':
            quoted = not quoted
            continue
        if quoted:
            continue
        if ch in _CLOSE:
            depth -= 1
        yield i, ch, depth
        if ch in _OPEN:
            depth += 1


def _split_top(text: str, sep: str) -> list[str]:
    parts, last = [], 0
    for i, ch, depth in _scan(text):
        if ch == sep and depth == 0:
            parts.append(text[last:i])
            last = i + 1
    parts.append(text[last:])
    return parts


def _first_bracketed(text: str) -> str | None:
    """The first balanced ``{...}`` or ``[...]`` in ``text`` (outside strings), with brackets."""
    start, base = None, 0
    for i, ch, depth in _scan(text):
        if start is None:
            if ch in "{[":
                start, base = i, depth
        elif ch in _CLOSE and depth == base:
            return text[start:i + 1]
    if start is not None:
        raise ValueError(f"unbalanced brackets in {text!r}")
    return None


def parse_value(text: str):
    expr = _first_bracketed(text)
    if expr is None:
        return Leaf()
    inner = expr[1:-1].strip()
    if expr[0] == "{":
        return parse_object(inner)
    return ListOf(parse_object(inner[1:-1])) if inner.startswith("{") and inner.endswith("}") \
        else Leaf()


def parse_object(inner: str) -> Obj:
    keys = {}
    for item in _split_top(inner, ","):
        item = item.strip()
        if not item or item == "...":
            continue
        if item.startswith('"'):
            end = item.index('"', 1)
            key, rest = item[:end + 1], item[end + 1:]
            rest = rest.split(":", 1)[1] if rest.lstrip().startswith(":") else ""
        else:
            parts = _split_top(item, ":")
            key, rest = parts[0].strip(), ":".join(parts[1:])
            key = re.sub(r"\s*\(.*\)$", "", key) if not key.startswith("<") else key
        keys[key] = parse_value(rest)
    return Obj(keys)


def schema_listing(text: str) -> list[str]:
    blocks = re.findall(r"^```[^\n]*\n(.*?)^```", text, flags=re.S | re.M)
    for block in blocks:
        if block.startswith("schema_version"):
            return block.splitlines()
    raise AssertionError("docs/results-json.md: no fenced block starting with schema_version")


def parse_schema(lines: list[str]) -> tuple[Obj, dict]:
    """The documented tree, and each top-level key's value text."""
    entries = []  # [name, value text, [[sub names, value text], ...]]
    for line in lines:
        if not line.strip():
            continue
        indent = len(line) - len(line.lstrip(" "))
        if indent == 0:
            name, _, rest = line.partition(" ")
            entries.append([name, rest.strip(), []])
        elif indent == 2:
            parts = re.split(r"\s{2,}", line.strip(), maxsplit=1)
            names = [n.strip() for n in parts[0].split(",")]
            entries[-1][2].append([names, parts[1] if len(parts) > 1 else ""])
        elif entries[-1][2]:
            entries[-1][2][-1][1] += " " + line.strip()
        else:
            entries[-1][1] += " " + line.strip()
    tree, values = {}, {}
    for name, value, subs in entries:
        values[name] = value
        if subs:
            tree[name] = Obj({n: parse_value(v) for names, v in subs for n in names})
        else:
            tree[name] = parse_value(value)
    return Obj(tree), values


def _pattern(key: str) -> str:
    """The regular expression of the actual keys a documented key stands for."""
    if key.startswith('"') and key.endswith('"'):
        key = key[1:-1]
    elif not re.fullmatch(r"\w+", re.sub(r"<[^>]*>", "x", key)):
        return ".+"  # an unquoted description such as "model input key"
    return "".join(".+" if p.startswith("<") else re.escape(p)
                   for p in re.split(r"(<[^>]*>)", key) if p)


def _documented_as(actual_key: str, patterns: dict) -> str | None:
    """The documented key an actual key falls under: a literal one first, else a pattern."""
    hits = [k for k, p in patterns.items() if re.fullmatch(p, actual_key)]
    literal = [k for k in hits if patterns[k] == re.escape(actual_key)]
    return (literal or hits or [None])[0]


def compare(doc, actual, path: str, problems: list[str]) -> None:
    """Append to ``problems`` where ``actual`` differs from the documented node ``doc``.

    Paths name list items ``[*]`` and keys by their documented form (``lpu.<output>``), so a
    difference repeated over items and outputs is reported once.
    """
    def report(text: str) -> None:
        if text not in problems:
            problems.append(text)

    if actual is None or isinstance(doc, Leaf):
        return
    if isinstance(doc, ListOf):
        if not isinstance(actual, list):
            report(f"{path}: documented as a list, is {type(actual).__name__}")
            return
        for item in actual:
            compare(doc.item, item, f"{path}[*]", problems)
        return
    if not isinstance(actual, dict):
        report(f"{path}: documented as an object, is {type(actual).__name__}")
        return
    patterns = {k: _pattern(k) for k in doc.keys}
    # A key standing for study-dependent names (``<input>``) may match none in an empty object.
    missing = [k for k, p in patterns.items() if not any(re.fullmatch(p, a) for a in actual)
               and (actual or p == re.escape(k))]
    extra = [a for a in actual if _documented_as(a, patterns) is None]
    if missing:
        report(f"{path or 'top level'}: documented, not written: {', '.join(missing)}")
    if extra:
        report(f"{path or 'top level'}: written, not documented: {', '.join(extra)}")
    for a, value in actual.items():
        k = _documented_as(a, patterns)
        if k is not None:
            compare(doc.keys[k], value, f"{path}.{k}" if path else k, problems)


def test_schema_parser_on_a_small_listing():
    lines = [
        "schema_version            1",
        "run                       {trials, mode: \"a\"|\"b\", adaptive: null or {digits,",
        "                           reached: {...}}}",
        "block",
        "  first, second",
        "  items                   [{name, \"allowed U (k = 2)\", ST_<output>, message (null, or",
        "                           why)}]   (note)",
        "  budgets                 {<output>: {<input or r(a, b)>: {kind}}}",
        "  nominal                 {model input key: value}",
        "tail                      [text]",
    ]
    tree, values = parse_schema(lines)
    assert values["schema_version"] == "1"
    assert set(tree.keys) == {"schema_version", "run", "block", "tail"}
    assert set(tree.keys["run"].keys) == {"trials", "mode", "adaptive"}
    assert set(tree.keys["run"].keys["adaptive"].keys) == {"digits", "reached"}
    block = tree.keys["block"]
    assert set(block.keys) == {"first", "second", "items", "budgets", "nominal"}
    item = block.keys["items"].item
    assert set(item.keys) == {"name", '"allowed U (k = 2)"', "ST_<output>", "message"}
    assert set(block.keys["budgets"].keys["<output>"].keys) == {"<input or r(a, b)>"}
    assert isinstance(tree.keys["tail"], Leaf)

    actual = {"schema_version": 1, "run": {"trials": 1, "mode": "a", "adaptive": None},
              "block": {"first": 1, "second": 2, "nominal": {"p0": 1.0},
                        "items": [{"name": "x", "allowed U (k = 2)": 1, "ST_y": 0, "ST_z": 0,
                                   "message": None}],
                        "budgets": {"y": {"p0 gauge": {"kind": "input"},
                                          "r(a, b)": {"kind": "r"}}}},
              "tail": ["t"]}
    problems: list[str] = []
    compare(tree, actual, "", problems)
    assert problems == []
    compare(tree, {**actual, "block": {**actual["block"], "budgets": {}}}, "", problems)
    assert problems == []
    actual["block"]["budgets"]["y"]["p0 gauge"] = {"kind": 1, "added": 2}
    actual["block"]["items"][0]["S1_y"] = 0.5
    del actual["run"]["mode"]
    compare(tree, actual, "", problems)
    assert problems == ["run: documented, not written: mode",
                        "block.items[*]: written, not documented: S1_y",
                        "block.budgets.<output>.<input or r(a, b)>: written, not documented: "
                        "added"]


@pytest.fixture(scope="module")
def demo_results() -> dict:
    import simunc
    from simunc.report.results_json import results_dict

    study = simunc.load_study(DEMO)
    study = dataclasses.replace(
        study, run=dataclasses.replace(study.run, sobol_base_samples=64),
        design=dataclasses.replace(study.design, trials=2000, verify_trials=2000))
    return results_dict(simunc.run(study, trials=2000, seed=1))


@pytest.mark.slow
def test_results_json_keys_match_the_documented_schema(demo_results):
    tree, _ = parse_schema(schema_listing(RESULTS_DOC.read_text()))
    # The demo writes every object the listing spells out below (so the comparison reaches them).
    for key in ("run", "setpoint", "conformity", "sensitivity", "requirements", "inputs",
                "outputs", "lpu"):
        assert demo_results[key], f"the demo run wrote no {key}"
    assert demo_results["requirements"]["allocation"] is not None
    problems: list[str] = []
    compare(tree, demo_results, "", problems)
    assert not problems, "results.json against docs/results-json.md:\n" + "\n".join(problems)


def test_documented_schema_version_is_the_written_one(demo_results):
    text = RESULTS_DOC.read_text()
    _, values = parse_schema(schema_listing(text))
    assert int(values["schema_version"]) == demo_results["schema_version"]
    policy = re.search(r"`schema_version` is an integer, now `(\d+)`", text)
    assert policy, "docs/results-json.md: no schema_version policy paragraph"
    assert int(policy.group(1)) == demo_results["schema_version"]


# ---------------------------------------------------------------------------------------------
# c) links


def test_relative_links_point_to_existing_files():
    broken = []
    for page in [ROOT / "README.md", *sorted(DOCS.glob("*.md"))]:
        for target in re.findall(r"\]\(([^)\s]+)\)", page.read_text()):
            if re.match(r"[a-z]+:", target) or target.startswith("#"):
                continue
            if not (page.parent / target.split("#")[0]).exists():
                broken.append(f"{page.relative_to(ROOT)} -> {target}")
    assert not broken, "broken links: " + ", ".join(broken)
