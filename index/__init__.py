"""wordkin's engine: loading, the store, the annoy index and the query engine.

This package never imports textual or rich (a test proves it in a subprocess). Import the submodules you need;
nothing heavy is imported here so that ``wordkin near`` on a cached set starts fast.
"""

__version__ = "0.1.0"
