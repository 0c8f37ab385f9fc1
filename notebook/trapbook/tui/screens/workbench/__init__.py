"""The parts of the Workbench (run editor), one mixin per job, put together by `screens/editor.py`.

The editor grew to one long class; each tab's form (Run, Lines, Steps, Outcome), the
strain card, the live rebuild of the run and the row keys now live in their own module, so
a change to one tab's form is read and reviewed on its own. The screen class keeps the
layout, the key bindings, the event routing and the open / save / leave flow; every mixin
works on that screen's state (`self.data`, `self.run`, `self.table`, ...) and its widgets.
"""
