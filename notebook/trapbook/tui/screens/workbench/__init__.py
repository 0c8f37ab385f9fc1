"""What the Workbench (run editor, `screens/editor.py`) keeps beside its tab widgets, one mixin per job.

The Run, Lines, Steps and Outcome tabs are widgets that own their forms and keys
(tui/widgets/); here are the live rebuild of the run and the panels that follow it, each
repainted only when it changed (live.py), and the strain card's state (strain_panel.py).
Both mixins work on the screen's state (`self.data`, `self.run`, `self.table`, ...) and
its widgets.
"""
