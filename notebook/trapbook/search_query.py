"""The one query language of run search: a `Query`, the typed filter syntax and its key table.

Every view that finds runs builds a `Query` and hands it to `search.search`: the Logbook's
filter box parses typed text with `parse_query`, `trapbook search` builds one from its options
with `query_from_options`. Neither view matches rows itself, so both give the same runs.

Typed syntax (the Logbook filter; `keys_markdown()` writes the README's table of keys):

- `key:value` narrows by one field; every part must hold (AND). A value with spaces is quoted:
  `chemist:"S. Iyer"`.
- Numbers and dates take comparisons and ranges: `temp:>100`, `temp:<=0`, `temp:-78..0`,
  `yield:50..80`, `time:>=2h`, `date:2026-09` (the whole month), `date:>=2026-09-12`.
  A bare value means "equal to"; a year or month means the whole period.
- Plain words (and "quoted phrases") are a full-text query over titles, notes, observations
  and tags, the same as `trapbook search --text`; a word that is a run id (`TB-0012`) or a
  chemist's name (`Iyer`, `"S. Iyer"`) finds that run or that chemist's runs too.
- An unknown key, a key given twice or a value that cannot be read is a `TrapbookError`
  naming the keys there are, never an empty answer.
"""

from __future__ import annotations

import re
from dataclasses import MISSING, dataclass, fields, replace

from .errors import TrapbookError

#: Seconds a substructure match may take before the search stops and says so.
DEFAULT_TIME_LIMIT_S = 5.0
#: The most results a search may be asked to cap itself at (leave the limit out for every run).
MAX_LIMIT = 1_000_000


@dataclass(frozen=True)
class Range:
    """Bounds of a number (in the field's canonical unit) or of a date written YYYY[-MM[-DD]].

    None is an open end; a strict end leaves the bound itself out (`>100` vs `>=100`).
    """

    low: float | str | None = None
    high: float | str | None = None
    low_strict: bool = False
    high_strict: bool = False

    def __post_init__(self) -> None:
        if self.low is None and self.high is None:
            raise TrapbookError("a range needs at least one bound", "write e.g. >100, <=0 or 80..120")


@dataclass(frozen=True)
class Query:
    """What a search asks for; every given part must hold (AND).

    Names (trap, fluoride, additive, solvent, chemist) are compared case-insensitively:
    `trap` is the compound (by name, common abbreviation or SMILES, so furan is not
    2,5-dimethylfuran); the others match when the recorded name contains the words.
    Temperatures are the highest the flask reaches (°C), times the summed holds (min),
    yields the run's best product yield (%, isolated preferred over NMR).
    """

    substructure: str | None = None
    similar: str | None = None
    min_similarity: float = 0.6
    inchikey: str | None = None
    trap: str | None = None
    fluoride: str | None = None
    additive: str | None = None
    solvent: str | None = None
    chemist: str | None = None
    screen: str | None = None
    finding: str | None = None
    tags: tuple[str, ...] = ()
    text: str | None = None
    temp_c: Range | None = None
    time_min: Range | None = None
    yield_pct: Range | None = None
    date: Range | None = None
    limit: int | None = None
    include_withdrawn: bool = False
    time_limit_s: float = DEFAULT_TIME_LIMIT_S

    def __post_init__(self) -> None:
        if self.limit is not None:
            check_limit(self.limit)

    def has_conditions(self) -> bool:
        """True when a summary-row condition (not a structure or text set) is asked for."""
        return bool(
            self.trap
            or self.fluoride
            or self.additive
            or self.solvent
            or self.finding
            or any(r is not None for r in (self.temp_c, self.time_min, self.yield_pct))
        )


@dataclass(frozen=True)
class FilterKey:
    """One key of the typed syntax: the Query field it fills and how it is explained."""

    name: str
    field: str
    kind: str  # "name", "trap", "structure", "number", "similarity", "tag", "date", "code", "screen"
    example: str
    help: str
    option: str
    aliases: tuple[str, ...] = ()


#: The typed syntax, in the order the help and the README list it.
FILTER_KEYS: tuple[FilterKey, ...] = (
    FilterKey(
        "trap",
        "trap",
        "trap",
        "trap:furan",
        "the trap compound by name, abbreviation (DPIBF) or SMILES; furan is furan, not 2,5-dimethylfuran",
        "--trap",
    ),
    FilterKey("fluoride", "fluoride", "name", "fluoride:TBAF", "fluoride source name contains this", "--fluoride"),
    FilterKey("additive", "additive", "name", "additive:TBAB", "additive name contains this", "--additive"),
    FilterKey("solvent", "solvent", "name", "solvent:THF", "solvent name contains this", "--solvent"),
    FilterKey("chemist", "chemist", "name", 'chemist:"S. Iyer"', "chemist name contains this", "--chemist"),
    FilterKey("screen", "screen", "screen", "screen:SC-0001", "runs of this screen (id or name)", "--screen"),
    FilterKey("finding", "finding", "code", "finding:trap-late", "runs with this bench-check finding code", "--finding"),
    FilterKey("tag", "tags", "tag", "tag:anti-Bredt", "runs carrying this tag (repeat for several)", "--tag", ("tags",)),
    FilterKey(
        "temp",
        "temp_c",
        "temperature",
        "temp:>100",
        "highest temperature of the run, °C or with a unit: >100, <=-40, -78..0, 373K..400K",
        "--temp-min/--temp-max",
        ("temperature",),
    ),
    FilterKey(
        "time", "time_min", "duration", "time:>=2h", "total hold time, min or with a unit: >=2h, 30..90", "--time-min/--time-max"
    ),
    FilterKey(
        "yield", "yield_pct", "percent", "yield:50..80", "best product yield, %: >50, <10, 50..80", "--yield-min/--yield-max"
    ),
    FilterKey(
        "date",
        "date",
        "date",
        "date:>=2026-09-12",
        "run date YYYY[-MM[-DD]]; a year or month is the whole period: 2026-09, <2026-10, 2026-09-01..2026-09-15",
        "--date-from/--date-to",
    ),
    FilterKey(
        "sub",
        "substructure",
        "structure",
        "sub:c1cc[nH]c1",
        "SMILES or SMARTS contained in the precursor, intermediate, trap or a product",
        "--substructure",
        ("s", "substructure"),
    ),
    FilterKey(
        "similar",
        "similar",
        "structure",
        "similar:C12=CCCC(CCC1)C2",
        "SMILES; runs whose parts have Morgan/Tanimoto similarity at least min (default 0.6)",
        "--similar",
    ),
    FilterKey("min", "min_similarity", "similarity", "min:0.4", "the Tanimoto threshold for similar:", "--min"),
    FilterKey(
        "inchikey",
        "inchikey",
        "structure",
        "inchikey:MWPLVEDNUUSJAV",
        "exact structure by InChIKey or its first 14-letter block",
        "--inchikey",
    ),
)
_BY_NAME = {alias: k for k in FILTER_KEYS for alias in (k.name, *k.aliases)}
_TOKEN = re.compile(r'\s*(?:(?P<key>[A-Za-z][\w-]*):(?P<value>"[^"]*"?|\S*)|(?P<word>"[^"]*"?|\S+))')
_COMPARISON = re.compile(r"^(>=|<=|≥|≤|>|<|=)?(.*)$", re.S)


def key_names() -> str:
    """The keys as a hint lists them."""
    return ", ".join(f"{k.name}:" for k in FILTER_KEYS)


def keys_markdown() -> str:
    """The README's table of filter keys, written from FILTER_KEYS so the two cannot drift."""
    rows = ["| key | example | finds | same as |", "|---|---|---|---|"]
    for k in FILTER_KEYS:
        also = "".join(f", `{a}:`" for a in k.aliases)
        rows.append(f"| `{k.name}:`{also} | `{k.example}` | {k.help} | `{k.option}` |")
    rows.append(
        '| plain words | `glovebox` `"silyl triflate"` `TB-0012` `Iyer` | full text of titles, notes, observations and tags;'
        " also a run id, or a chemist's name or surname | `--text` |"
    )
    return "\n".join(rows)


def help_rows() -> list[tuple[str, str]]:
    """(example, meaning) for the filter's help in the terminal UI, from the same table."""
    rows = [(k.example, k.help) for k in FILTER_KEYS]
    rows.append(("glovebox", "plain words: full text of titles, notes, observations and tags"))
    rows.append(("TB-0012  Iyer", "a plain word also finds a run by its id, or a chemist's runs by name"))
    rows.append(("temp:>100 yield:<20", "parts combine: every one must hold"))
    return rows


def _unquote(text: str) -> str:
    return text[1:-1] if len(text) >= 2 and text[0] == text[-1] == '"' else text.strip('"')


_PLAIN_WORD = re.compile(r'"[^"]*"?|\S+')


def plain_words(text: str) -> list[str]:
    """The words and "quoted phrases" of a text query, unquoted: each is matched on its own
    against run ids and chemists' names, where a whole-text match would miss them."""
    return [w for w in (_unquote(m.group()).strip() for m in _PLAIN_WORD.finditer(text or "")) if w]


def parse_query(text: str) -> Query:
    """Typed filter text -> Query; a TrapbookError names what could not be read and the keys there are."""
    values: dict[str, object] = {}
    tags: list[str] = []
    words: list[str] = []
    for m in _TOKEN.finditer(text or ""):
        if m.group("word") is not None:
            words.append(m.group("word"))
            continue
        name, raw = m.group("key").lower(), _unquote(m.group("value"))
        key = _BY_NAME.get(name)
        if key is None:
            raise TrapbookError(
                f"the filter has no key '{name}:'",
                f"keys: {key_names()}; or put the words in quotes",
                field="filter",
                got=name,
                expected=[k.name for k in FILTER_KEYS],
            )
        if not raw.strip():
            raise TrapbookError(f"'{name}:' needs a value", f"e.g. {key.example}", field="filter", got=name)
        if key.field == "tags":
            tags.append(raw.strip())
            continue
        if key.field in values:
            raise TrapbookError(
                f"'{key.name}:' is given twice", "give each key once (only tag: repeats)", field="filter", got=name
            )
        values[key.field] = _value(key, raw.strip())
    if "min_similarity" in values and "similar" not in values:
        raise TrapbookError(
            "'min:' is the threshold of a similarity query",
            "add similar:SMILES, e.g. similar:C1=CCCC1 min:0.4",
            field="filter",
            got="min",
        )
    if words:
        values["text"] = " ".join(words)
    return Query(tags=tuple(tags), **values)


def _value(key: FilterKey, raw: str):
    if key.kind == "date":
        return date_range(raw, key.name)
    if key.kind in ("temperature", "duration", "percent"):
        return number_range(raw, key.kind, key.name)
    if key.kind == "similarity":
        try:
            return float(raw)
        except ValueError:
            raise TrapbookError(
                f"min:{raw} is not a number", "give a Tanimoto threshold such as min:0.5", field="filter", got=raw
            ) from None
    return raw


def _split_range(text: str) -> tuple[str, str | None, str | None]:
    """'a..b' -> ('..', a, b); '>=a' -> ('>=', a, None); 'a' -> ('=', a, None)."""
    if ".." in text:
        low, _, high = text.partition("..")
        return "..", low.strip() or None, high.strip() or None
    op, rest = _COMPARISON.match(text.strip()).groups()
    return {"≥": ">=", "≤": "<="}.get(op or "=", op or "="), rest.strip(), None


def _as_range(op: str, a, b) -> Range:
    if op == "..":
        return Range(low=a, high=b)
    if op in (">", ">="):
        return Range(low=a, low_strict=op == ">")
    if op in ("<", "<="):
        return Range(high=a, high_strict=op == "<")
    return Range(low=a, high=a)


def number_range(text: str, kind: str, name: str) -> Range:
    """'>100', '<=0', '-78..0', '373K..400K', '50' -> Range in °C, min or %."""
    op, a, b = _split_range(text)
    low, high = number(a, kind, name), number(b, kind, name)
    if op == ".." and low is not None and high is not None and low > high:
        raise TrapbookError(
            f"{name}:{text} runs from high to low", f"write the lower bound first, e.g. {name}:{b}..{a}", field="filter", got=text
        )
    return _as_range(op, low, high)


def date_range(text: str, name: str = "date") -> Range:
    """'2026-09', '>=2026-09-12', '<2026-10', '2026-09-01..2026-09-15' -> Range of date strings."""
    op, a, b = _split_range(text)
    return _as_range(op, check_date(a, name), check_date(b, name))


def number(value, kind: str, name: str) -> float | None:
    """A bound given as a number (in °C, min or %) or as text with a unit ('2 h', '60 °C')."""
    if value is None or value == "":
        return None
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        out = float(value)
    else:
        text = str(value).strip().replace("\u2212", "-")  # the minus sign as typeset (−78) reads as a hyphen-minus
        if kind == "percent":
            try:
                out = float(text.rstrip("% "))
            except ValueError:
                raise TrapbookError(
                    f"{name} '{text}' is not a percentage", "give a number such as 50", field=name, got=text
                ) from None
        else:
            try:
                out = float(text)
            except ValueError:
                from .units import parse_quantity, to_canonical

                out = to_canonical(parse_quantity(text, kind, name), kind)
    if out != out or out in (float("inf"), float("-inf")):
        raise TrapbookError(f"{name} '{value}' is not a finite number", "give a number such as 100", field=name, got=value)
    return out


def check_time_limit(seconds) -> float:
    """The seconds a substructure match may take: a positive number up to an hour."""
    try:
        value = float(seconds)
    except (TypeError, ValueError):
        value = float("nan")
    if not 0 < value <= 3600:
        raise TrapbookError(
            f"time limit {seconds} s is not between 0 and 3600 seconds",
            "give e.g. 5 (the default) or 30",
            field="time limit",
            got=seconds,
        )
    return value


def check_limit(value) -> int:
    """The most results to return: a whole number from 1 to MAX_LIMIT (a bigger cap means nothing)."""
    whole = isinstance(value, int) and not isinstance(value, bool)
    if not whole or not 1 <= value <= MAX_LIMIT:
        shown = str(value) if not whole or abs(value) < 10**12 else f"{str(value)[:6]}… ({len(str(abs(value)))} digits)"
        raise TrapbookError(
            f"limit {shown} is not a whole number from 1 to {MAX_LIMIT}",
            "give e.g. --limit 20, or leave --limit out to list every matching run",
            field="limit",
            got=shown,
            expected=f"1..{MAX_LIMIT}",
        )
    return value


def check_date(value, name: str) -> str | None:
    """A date bound as typed (YYYY, YYYY-MM or YYYY-MM-DD) once it is known to be on the calendar."""
    import datetime as _dt

    if value is None or value == "":
        return None
    text = str(value).strip()
    ok = re.fullmatch(r"\d{4}(-\d{2}(-\d{2})?)?", text) is not None
    if ok:
        parts = text.split("-")
        try:
            if len(parts) == 3:
                _dt.date.fromisoformat(text)
            elif len(parts) == 2:
                ok = 1 <= int(parts[1]) <= 12
        except ValueError:
            ok = False
    if not ok:
        raise TrapbookError(
            f"date {name} '{text}' is not a date written YYYY-MM-DD", "e.g. 2026-09-01, 2026-09 or 2026", field=name, got=text
        )
    return text


def query_from_options(
    *,
    temp_min=None,
    temp_max=None,
    time_min=None,
    time_max=None,
    yield_min=None,
    yield_max=None,
    date_from=None,
    date_to=None,
    tags=None,
    **rest,
) -> Query:
    """The Query of `trapbook search`'s options (and of `search.search(nb, **options)`)."""

    def bounds(low, high, kind, name) -> Range | None:
        lo, hi = number(low, kind, f"minimum {name}"), number(high, kind, f"maximum {name}")
        return None if lo is None and hi is None else Range(low=lo, high=hi)

    lo, hi = check_date(date_from, "from"), check_date(date_to, "to")
    tag_list = tags.split(",") if isinstance(tags, str) else list(tags or [])
    known = set(Query.__dataclass_fields__)
    unknown = sorted(set(rest) - known)
    if unknown:
        raise TrapbookError(f"no search option {', '.join(unknown)}", "see trapbook search --help")
    given = {k: v for k, v in rest.items() if v is not None}
    for name in (
        "substructure",
        "similar",
        "inchikey",
        "trap",
        "fluoride",
        "additive",
        "solvent",
        "chemist",
        "screen",
        "finding",
        "text",
    ):
        if isinstance(given.get(name), str) and not given[name].strip() and name != "text":
            given.pop(name)  # an empty option narrows nothing, as when it is left out
    return Query(
        temp_c=bounds(temp_min, temp_max, "temperature", "temperature"),
        time_min=bounds(time_min, time_max, "duration", "time"),
        yield_pct=bounds(yield_min, yield_max, "percent", "yield"),
        date=None if lo is None and hi is None else Range(low=lo, high=hi),
        tags=tuple(t.strip() for t in tag_list if t and t.strip()),
        **given,
    )


def combined(typed: Query, options: Query) -> Query:
    """One Query of filter text typed on the command line and the command's options: every part of
    both must hold. A part given both ways with different values is refused rather than one
    silently winning; tags add up."""
    merged: dict[str, object] = {}
    for f in fields(Query):
        default = f.default if f.default is not MISSING else ()
        a, b = getattr(typed, f.name), getattr(options, f.name)
        if f.name == "tags":
            merged[f.name] = tuple(dict.fromkeys(a + b))
        elif a == default or a is None:
            merged[f.name] = b
        elif b == default or b is None or a == b:
            merged[f.name] = a
        else:
            raise TrapbookError(
                f"'{f.name}' is given both in the typed filter and as an option",
                "give it one way: either the word key:value or the --option",
                field=f.name,
            )
    return replace(options, **merged)
