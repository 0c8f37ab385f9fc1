"""A text box whose editing keys act in the order they were typed.

Textual inserts a typed character as soon as the box receives its key, but runs a bound key
(End, Home, the arrows, backspace, Enter) only once the key has bubbled up: keys that arrive
together — a fast typist, or a burst over a slow SSH link — are then applied out of order.
`End` then " (rerun)" replaced a whole selected title with " (rerun)", and `ab⌫c` gave "ab".
This box runs its own bound keys the moment they arrive, so what is typed is what it holds.
"""

from __future__ import annotations

from textual import events
from textual.widgets import Input


class InOrderInput(Input):
    async def on_key(self, event: events.Key) -> None:
        if event.is_printable:
            return
        table = self._bindings.key_to_bindings
        bindings = next((table[k] for k in event.aliases if k in table), None)
        if bindings:  # now, not behind the keys typed after it
            event.prevent_default()
            event.stop()
            await self.run_action(bindings[0].action)
