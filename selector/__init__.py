"""selector: pick power switches, heatsinks and thermal interfaces for a board's switched loads.

The library never imports streamlit; the page (``app.py``) and the command line
(``selector.cli``) are thin shells over :func:`selector.pipeline.select`.
"""

__version__ = "0.1.0"
