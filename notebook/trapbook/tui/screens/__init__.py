"""The screens: Logbook (runs), Workbench (run editor), Screen board (review),
Version trail (history), Keys (help) and the small dialogs."""
