"""fieldkit's terminal UI: a technician's screens over the same Workbench the CLI uses.

Nothing in the rest of the package imports from here; the screens only read the store, the
profiles and the diagnosis, and write through the Workbench and the store.
"""
