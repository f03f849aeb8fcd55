"""Polyadic: higher-order structure in tabular data with information theory, in JupyterLab.

The Python package ships the prebuilt JupyterLab extension and the kernel side of the bridge.
Importing it in a Jupyter kernel registers the ``polyadic`` comm target the side panel talks
to; elsewhere the import registers nothing.
"""

try:
    from ._version import __version__
except ImportError:  # pragma: no cover - only in a source tree that was never built
    import warnings

    warnings.warn("Importing 'polyadic' outside a proper installation.", stacklevel=2)
    __version__ = "dev"

from .bridge import ResultsNotFound, results
from .bridge import register as _register_bridge
from .fingerprint import fingerprint
from .show import show


def _jupyter_labextension_paths():
    """Where JupyterLab finds the prebuilt extension."""
    return [{"src": "labextension", "dest": "jupyterlab-polyadic"}]


def _jupyter_server_extension_points():
    """The Jupyter server extension: the route that streams handover files to the page."""
    return [{"module": "polyadic._server"}]


def _register_quietly():
    # The import must never fail because of the bridge: outside a kernel this is a no-op, and
    # inside one a failure leaves the panel unable to connect, which it reports itself.
    try:
        _register_bridge()
    except Exception:  # noqa: BLE001
        import logging

        logging.getLogger("polyadic.bridge").debug("registering the comm target failed", exc_info=True)


_register_quietly()

__all__ = ["ResultsNotFound", "__version__", "fingerprint", "results", "show"]
