"""The steps of a run as the sentences of a procedure, in the order they were done.

Each step says what went in (with amounts), at what temperature, for how long, in a
closed vessel or not — with temperatures and times in the chemist's own words ('rt',
'0 °C to rt', 'overnight'), as the record keeps them. Whether the flask was cooled,
warmed or heated is read from the numbers the words stand for.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..amounts import AmountTable
from ..phrases import hold_as_written, paper_quantity, temperature_as_written
from ..records import Run, Step
from ..units import to_canonical
from .document import clean, sentence
from .reagents import join_words, reagent_phrase

#: Above this a flask is 'heated', not 'warmed' (a little over any lab's room temperature). Common practice, no source.
HEATED_ABOVE_C = 30.0
#: Temperatures closer than this count as the same. Common practice, no source.
SAME_TEMPERATURE_C = 0.5


def _change_verb(before: float | None, after: float) -> str:
    if before is None or abs(after - before) < SAME_TEMPERATURE_C:
        return ""
    if after < before:
        return "cooled"
    return "heated" if after > HEATED_ABOVE_C else "warmed"


@dataclass
class Varied:
    """What a general procedure says instead of one run's value: line name (casefolded) ->
    words for a material, step index -> words for its temperature or hold."""

    lines: dict[str, str] = field(default_factory=dict)
    temperatures: dict[int, str] = field(default_factory=dict)
    holds: dict[int, str] = field(default_factory=dict)
    concentration_in_table: bool = False


class StepWriter:
    """Walks the steps keeping what the flask is at (temperature, atmosphere, contents)."""

    def __init__(self, run: Run, table: AmountTable | None, varied: Varied | None = None):
        self.run = run
        self.table = table
        self.varied = varied or Varied()
        self.index = 0
        self.temp_c: float | None = None
        self.atmosphere: str | None = None
        self.charged = False
        self.added: list[str] = []
        self.solvent_named = False
        self.unknown: list[str] = []

    def _names(self, step: Step) -> list[str]:
        out = []
        for name in step.add:
            line = self.run.line(name)
            if line is None:
                self.unknown.append(name)
                out.append(clean(name))
                continue
            self.added.append(line.name)
            concentration_for = None
            if line.role == "solvent" and not self.solvent_named and not self.varied.concentration_in_table:
                concentration_for, self.solvent_named = line.name, True
            said = self.varied.lines.get(line.name.casefold())
            out.append(said if said is not None else reagent_phrase(line.name, self.table, concentration_for))
        return out

    def _additions(self, step: Step) -> str:
        items = self._names(step)
        verb = "were" if len(items) > 1 else "was"
        t_words = self._temperature(step)
        t_new = (
            step.temperature is not None
            and step.temperature_end is None  # a ramp is said by the stirring
            and _change_verb(self.temp_c, to_canonical(step.temperature, "temperature")) != ""
        )
        atmosphere = f" under {clean(step.atmosphere)}" if step.atmosphere and step.atmosphere != self.atmosphere else ""
        over = f" over {paper_quantity(step.over)}" if step.over is not None else ""
        if not self.charged:
            self.charged = True
            what = "were combined" if len(items) > 1 else "was placed in the reaction vessel"
            at = f" at {t_words}" if t_words else ""
            return f"{join_words(items)} {what}{at}{atmosphere}{over}"
        lead = f"At {t_words}, " if t_new else ""
        at = f" at {t_words}" if t_words and not t_new and self.temp_c is None else ""
        return f"{lead}{join_words(items)} {verb} added{over}{at}{atmosphere}"

    def _stirring(self, step: Step, after_addition: bool) -> str:
        """'The mixture was cooled to −78 °C and stirred for 5 min', or '' when nothing changes."""
        hold = self.varied.holds.get(self.index) or hold_as_written(step)
        t_words = self._temperature(step)
        vessel = "The vessel was sealed and the mixture" if step.sealed else "The mixture"
        during = "" if not hold else (f" {hold}" if step.hold_written and self.index not in self.varied.holds else f" for {hold}")
        if step.temperature_end is not None:
            rising = to_canonical(step.temperature_end, "temperature") >= to_canonical(step.temperature, "temperature")
            move = "allowed to warm" if rising else "cooled"
            ramp = (
                t_words
                if " to " in t_words
                else (f"{paper_quantity(step.temperature)} to {paper_quantity(step.temperature_end)}")
            )
            ramp = ramp if self.index in self.varied.temperatures else f"from {ramp}"
            return f"{vessel} was {move} {ramp}" + (f" and stirred{during}" if hold else "")
        if step.temperature is None:
            return f"{vessel} was stirred{during}" if hold else ("The vessel was sealed" if step.sealed else "")
        verb = "" if after_addition else _change_verb(self.temp_c, to_canonical(step.temperature, "temperature"))
        if verb == "heated":
            return f"{vessel} was heated at {t_words}{during}"
        if verb:
            return f"{vessel} was {verb} to {t_words}" + (f" and stirred{during}" if hold else "")
        if hold:
            return f"{vessel} was stirred at {t_words}{during}"
        return "The vessel was sealed" if step.sealed else ""

    def _temperature(self, step: Step) -> str:
        return self.varied.temperatures.get(self.index) or temperature_as_written(step)

    def sentences(self, step: Step) -> list[str]:
        out = []
        if step.add:
            out.append(self._additions(step))
        stir = self._stirring(step, after_addition=bool(step.add))
        if stir:
            out.append(stir)
        if step.atmosphere and not step.add and step.atmosphere != self.atmosphere and out:
            out[-1] += f" under {clean(step.atmosphere)}"
        if step.note and out:
            out[-1] += f" ({clean(step.note)})"
        if step.temperature is not None:
            last = step.temperature_end if step.temperature_end is not None else step.temperature
            self.temp_c = to_canonical(last, "temperature")
        if step.atmosphere:
            self.atmosphere = step.atmosphere
        self.index += 1
        return [sentence(s) for s in out]


def step_sentences(run: Run, table: AmountTable | None, varied: Varied | None = None) -> tuple[list[str], list[str]]:
    """(sentences, notes): the procedure from the steps, and what the record leaves unsaid."""
    writer = StepWriter(run, table, varied)
    sentences: list[str] = []
    for step in run.steps:
        sentences += writer.sentences(step)
    notes = [f"a step adds '{clean(n)}', which is not one of the lines" for n in writer.unknown]
    placed = {n.casefold() for n in writer.added}
    missing = [
        ln.name for ln in run.lines if ln.role not in ("product", "internal standard") and ln.name.casefold() not in placed
    ]
    if missing:
        solvent = (
            None
            if writer.solvent_named or writer.varied.concentration_in_table
            else next((n for n in missing if run.line(n).role == "solvent"), None)
        )
        items = [reagent_phrase(n, table, solvent) for n in missing]
        if not run.steps:
            sentences.insert(0, sentence(f"{join_words(items)} were combined" if len(items) > 1 else f"{items[0]} was used"))
            notes.append("the run records no steps, so the order of additions is not known")
        else:
            sentences.append(
                sentence(f"The record does not say when {join_words(items)} {'were' if len(items) > 1 else 'was'} added")
            )
            notes.append("no step adds " + ", ".join(f"'{clean(n)}'" for n in missing))
    return sentences, notes
