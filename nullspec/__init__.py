"""nullspec: does the spectrum of a real square matrix show structure beyond i.i.d. noise?

The public API is re-exported here; see README.md for a tour and DEVELOPERS.md for the architecture.
"""

__version__ = "0.1.0"

from . import ginibre

__all__ = ["__version__", "ginibre"]
