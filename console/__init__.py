"""wordkin's user-facing side: the ``wordkin`` command, the Textual console, the notebook and its exports."""
