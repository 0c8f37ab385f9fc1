"""The footer: the screen's most important keys first, as many as fit, and f1 always in sight.

Textual's own footer shows every shown binding and lets the last ones fall off the edge,
which on an 80-column terminal is the key that lists all the others. Here the bindings are
taken in the order the screen lists them (most important first), those that do not fit
are left to the f1 list, and f1 closes the row.
"""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.widgets import Footer
from textual.widgets._footer import FooterKey

#: The binding that lists every key (TrapbookApp.action_keys); it is never dropped.
ALL_KEYS_ACTION = "app.keys"
#: How many of the screen's keys come before those of the widget in focus.
SCREEN_LEADS = 3


class KeyBar(Footer):
    """A footer that fits the terminal's width: first keys first, f1 last and always shown."""

    def compose(self) -> ComposeResult:
        if not self._bindings_ready:
            return
        width = self.size.width or self.app.size.width
        narrow = width < 120
        keys, help_key = [], None
        seen: set[str] = set()
        active = sorted(self.screen.active_bindings.values(), key=self.rank)
        for _, binding, enabled, tooltip in active:
            if not binding.show or binding.action in seen:
                continue
            seen.add(binding.action)
            if binding.action in (ALL_KEYS_ACTION, "keys"):
                help_key = (binding, enabled, tooltip)
            else:
                keys.append((binding, enabled, tooltip))

        def cost(binding) -> int:
            return len(self.app.get_key_display(binding)) + len(binding.description) + (2 if narrow else 3)

        room = width - (cost(help_key[0]) if help_key else 0)
        fitted = []
        for item in keys:
            room -= cost(item[0])
            if room < 0:
                break
            fitted.append(item)
        self.styles.grid_size_columns = len(fitted) + (1 if help_key else 0)
        for binding, enabled, tooltip in fitted + ([help_key] if help_key else []):
            yield FooterKey(
                binding.key,
                self.app.get_key_display(binding),
                binding.description,
                binding.action,
                disabled=not enabled,
                tooltip=tooltip,
            ).data_bind(compact=Footer.compact)

    def rank(self, item) -> tuple[int, int]:
        """The screen's first keys lead (listed by importance), then those of the widget in
        focus (a tab's row keys), then the rest of the screen's, the app's last."""
        node, binding = item[0], item[1]
        if node is self.app:
            return (3, 0)
        if node is not self.screen:
            return (1, 0)
        shown = [b.action for b in type(self.screen).BINDINGS if isinstance(b, Binding) and b.show]
        at = shown.index(binding.action) if binding.action in shown else len(shown)
        return (0 if at < SCREEN_LEADS else 2, at)

    def on_resize(self) -> None:
        width = self.size.width
        if getattr(self, "_laid_out_for", None) != width:  # a new width may fit more keys, or fewer
            self._laid_out_for = width
            self.call_after_refresh(self.recompose)
