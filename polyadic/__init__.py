"""Polyadic: higher-order structure in tabular data with information theory, in JupyterLab.

The Python package ships the prebuilt JupyterLab extension and the kernel side of the bridge.
"""

try:
    from ._version import __version__
except ImportError:  # pragma: no cover - only in a source tree that was never built
    import warnings

    warnings.warn("Importing 'polyadic' outside a proper installation.", stacklevel=2)
    __version__ = "dev"


def _jupyter_labextension_paths():
    """Where JupyterLab finds the prebuilt extension."""
    return [{"src": "labextension", "dest": "jupyterlab-polyadic"}]
