"""The ``feasibly`` command: ``assess``, ``screen``, ``species``, ``equilibrate`` and ``verify``.

Layer rule: the command line calls the kernel wings and records; it never imports figures or
widgets.
"""

from .main import main

__all__ = ["main"]
