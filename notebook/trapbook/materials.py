"""Solvents and reagents Trapbook knows by name or structure, with sourced properties.

The bench checks need to know that a line called "THF (dry)" boils at 66 °C, that
"TBAF 1.0 M in THF" is a commercial fluoride solution that carries water, and that
fluorotrimethylsilane is a gas at room temperature. Those facts live in JSON files
shipped with the package (``trapbook/data/``), each number beside its source, so a
reviewer can check a value without reading code. This module only loads and matches.
"""

from __future__ import annotations

import json
import math
import re
from dataclasses import dataclass, field
from functools import lru_cache
from pathlib import Path

from .chemistry import molecules
from .errors import ChemistryError, TrapbookError

DATA_DIR = Path(__file__).parent / "data"

#: Words that describe the grade or handling of a material rather than what it is.
_QUALIFIERS = re.compile(r"\b(dry|anhydrous|anh\.?|degassed|distilled|fresh|freshly|neat|solid|sure-?seal)\b", re.I)
_SOLUTION_SOLVENT = re.compile(r"\bin\s+([A-Za-z0-9,\-]+(?:\s+ether)?)\s*$", re.I)

_BAR_PER_KPA = 0.01
#: The key of water in data/solvents.json: a line of it is counted whole by the water check.
WATER_KEY = "water"
_BAR_PER_MMHG = 1.01325 / 760.0


@dataclass(frozen=True)
class Sourced:
    """A number and where it came from; the source travels with the value into messages."""

    value: float
    source: str


@dataclass(frozen=True)
class Antoine:
    """Vapour pressure constants kept in the form they were published in, to avoid retyping errors."""

    form: str  # "log10_bar_K", "ln_kPa_degC", "ln_mmHg_K" or "log10_mmHg_degC"
    a: float
    b: float
    c: float
    t_min_c: float
    t_max_c: float
    source: str

    def pressure_bar(self, t_c: float) -> float:
        """Vapour pressure of the pure liquid at t_c (°C), in bar."""
        if self.form == "log10_bar_K":
            return 10 ** (self.a - self.b / (t_c + 273.15 + self.c))
        if self.form == "ln_kPa_degC":
            return math.exp(self.a - self.b / (t_c + self.c)) * _BAR_PER_KPA
        if self.form == "ln_mmHg_K":
            return math.exp(self.a - self.b / (t_c + 273.15 + self.c)) * _BAR_PER_MMHG
        if self.form == "log10_mmHg_degC":
            return 10 ** (self.a - self.b / (t_c + self.c)) * _BAR_PER_MMHG
        raise TrapbookError(
            f"Antoine form '{self.form}' is not known", "use log10_bar_K, ln_kPa_degC, ln_mmHg_K or log10_mmHg_degC"
        )

    def covers(self, t_c: float) -> bool:
        return self.t_min_c <= t_c <= self.t_max_c


@dataclass(frozen=True)
class Material:
    key: str
    name: str
    category: str  # "solvent" or the reagent's kind ("fluoride source", "acid", ...)
    smiles: str | None
    aliases: tuple[str, ...]
    bp_c: Sourced | None = None
    mp_c: Sourced | None = None
    density_g_ml: Sourced | None = None
    antoine: Antoine | None = None
    hazards: tuple[str, ...] = ()
    molar_mass_g_mol: Sourced | None = None
    fluoride_per_formula: float | None = None
    solution_water_per_fluoride: Sourced | None = None
    hygroscopic: bool = False
    extra: dict = field(default_factory=dict, compare=False, hash=False)

    @property
    def is_solvent(self) -> bool:
        return self.category == "solvent"


@dataclass(frozen=True)
class Hazard:
    key: str
    title: str
    caution: str


def _sourced(raw: dict | None, where: str) -> Sourced | None:
    if raw is None:
        return None
    try:
        return Sourced(float(raw["value"]), str(raw["source"]))
    except (KeyError, TypeError, ValueError):
        raise TrapbookError(f"materials data: {where} needs a numeric value and a source", "fix trapbook/data/*.json") from None


def _antoine(raw: dict | None, where: str) -> Antoine | None:
    if raw is None:
        return None
    try:
        return Antoine(
            str(raw["form"]),
            float(raw["A"]),
            float(raw["B"]),
            float(raw["C"]),
            float(raw["t_min_c"]),
            float(raw["t_max_c"]),
            str(raw["source"]),
        )
    except (KeyError, TypeError, ValueError):
        raise TrapbookError(
            f"materials data: Antoine constants of {where} are incomplete", "fix trapbook/data/solvents.json"
        ) from None


def _material(raw: dict, category: str) -> Material:
    key = raw.get("key") or raw.get("name")
    if not key:
        raise TrapbookError("materials data: an entry has no key", "fix trapbook/data/*.json")
    return Material(
        key=key,
        name=raw.get("name", key),
        category=category or raw.get("kind", "reagent"),
        smiles=raw.get("smiles"),
        aliases=tuple(raw.get("aliases", ())) + (raw.get("name", key),),
        bp_c=_sourced(raw.get("bp_c"), f"{key} bp"),
        mp_c=_sourced(raw.get("mp_c"), f"{key} mp"),
        density_g_ml=_sourced(raw.get("density_g_ml"), f"{key} density"),
        antoine=_antoine(raw.get("antoine"), key),
        hazards=tuple(raw.get("hazards", ())),
        molar_mass_g_mol=_sourced(raw.get("molar_mass_g_mol"), f"{key} molar mass"),
        fluoride_per_formula=raw.get("fluoride_per_formula"),
        solution_water_per_fluoride=_sourced(raw.get("solution_water_per_fluoride"), f"{key} solution water"),
        hygroscopic=bool(raw.get("hygroscopic", False)),
        extra={k: v for k, v in raw.items() if k.endswith("_note")},
    )


def _read(name: str) -> dict:
    path = DATA_DIR / name
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except (OSError, json.JSONDecodeError) as exc:
        raise TrapbookError(f"materials data file {name} cannot be read ({exc})", "reinstall Trapbook") from None


@lru_cache(maxsize=1)
def all_materials() -> tuple[Material, ...]:
    solvents = [_material(r, "solvent") for r in _read("solvents.json")["solvents"]]
    reagents = [_material(r, r.get("kind", "reagent")) for r in _read("reagents.json")["reagents"]]
    return tuple(solvents + reagents)


#: Closing sentence of every safety caution: a reminder, not an assessment.
DEFER = "Follow the SDS, your local rules and your lab's safety officer; this reminder does not replace a risk assessment."

#: The hazards every trapping run shares, for pages that speak of the work in general
#: (bench sheets, reports): fluoride, pressure in sealed vessels, peroxide-forming traps.
GENERAL_HAZARDS = ("fluoride", "sealed_pressure", "peroxide_former")


def caution_text(keys) -> str:
    """The caution for these hazard keys (each once, in the data file's words) closed by `DEFER`.

    The one place a caution is worded: the checks, bench sheets, reports and exports call it.
    """
    table = hazards()
    keys = list(dict.fromkeys(keys))
    unknown = [k for k in keys if k not in table]
    if unknown:
        raise TrapbookError(f"materials data: no caution for hazard(s) {', '.join(unknown)}", "fix trapbook/data/hazards.json")
    return " ".join([table[k].caution for k in keys] + [DEFER])


def cautions_once(cautions) -> str:
    """Several cautions as one text: each sentence once, then `DEFER` once at the end ("" for none).

    Every caution closes with `DEFER`; joined as they are, a page would repeat it once per
    caution. The one place cautions are put together (exports, the experimental paragraph).
    """
    said: list[str] = []
    for text in cautions:
        for sentence in re.split(r"(?<=\.)\s+", (text or "").replace(DEFER, "")):
            if sentence.strip() and sentence.strip() not in said:
                said.append(sentence.strip())
    return " ".join(said + [DEFER]) if said else ""


def material_caution(mat: Material) -> str:
    """The caution of one material: those of all its hazards."""
    return caution_text(mat.hazards)


@lru_cache(maxsize=1)
def hazards() -> dict[str, Hazard]:
    raw = _read("hazards.json")["hazards"]
    return {k: Hazard(k, v["title"], v["caution"]) for k, v in raw.items()}


def by_key(key: str) -> Material:
    for m in all_materials():
        if m.key == key:
            return m
    raise TrapbookError(f"no material '{key}' in the materials data", "see trapbook/data/solvents.json and reagents.json")


def _name_key(text: str) -> str:
    return re.sub(r"\s+", " ", text.replace("·", " ").strip()).casefold()


def _structure_key(smiles: str) -> str | None:
    """Canonical SMILES without water fragments, so a hydrate matches its anhydrous entry;
    water alone stays water."""
    try:
        canon = molecules.canonical(smiles)
    except ChemistryError:
        return None
    frags = sorted(f for f in canon.split(".") if f != "O")
    return ".".join(frags) or ("O" if canon else None)


@lru_cache(maxsize=1)
def _indexes() -> tuple[dict[str, Material], dict[str, Material]]:
    names: dict[str, Material] = {}
    structures: dict[str, Material] = {}
    for m in all_materials():
        for alias in m.aliases:
            names.setdefault(_name_key(alias), m)
        if m.smiles:
            key = _structure_key(m.smiles)
            if key:
                structures.setdefault(key, m)
    return names, structures


def _bare_name(name: str) -> str:
    """'THF (dry)' -> 'THF'; 'TBAF 1.0 M in THF' -> 'TBAF': what the material is, not its grade."""
    text = re.sub(r"\([^)]*\)", " ", name)
    text = _QUALIFIERS.sub(" ", text)
    text = re.split(r"\s\d|,\s", " " + text.strip(), maxsplit=1)[0]
    text = re.sub(r"\s+in\s+.*$", "", text, flags=re.I)
    return text.strip(" ,;-")


def find(name: str | None = None, smiles: str | None = None) -> Material | None:
    """The known material a line is, by structure first (unambiguous), then by name."""
    names, structures = _indexes()
    if smiles:
        key = _structure_key(smiles)
        if key and key in structures:
            return structures[key]
    if name:
        for candidate in (name, _bare_name(name)):
            m = names.get(_name_key(candidate))
            if m is not None:
                return m
    return None


def recognise(line) -> Material | None:
    """The material on a record line (anything with .name and .smiles), or None."""
    return find(getattr(line, "name", None), getattr(line, "smiles", None))


def is_water(line) -> bool:
    """Whether a record line is water itself (by name or structure), not a hydrate or a solution in water."""
    mat = recognise(line)
    return mat is not None and mat.key == WATER_KEY


def solution_solvent(line) -> Material | None:
    """The solvent a stock solution is made up in, read from a name such as '1.0 M in THF'."""
    if getattr(line, "molarity", None) is None:
        return None
    m = _SOLUTION_SOLVENT.search(getattr(line, "name", "") or "")
    if not m:
        return None
    found = find(m.group(1))
    return found if found is not None and found.is_solvent else None
