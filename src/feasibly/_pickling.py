"""Pickling for objects that hold read-only mappings (``types.MappingProxyType`` cannot be
pickled): they travel as plain dicts and are frozen again on arrival, so species, formulas,
reactions, libraries and results cross process pools and cluster workers intact."""

from __future__ import annotations

from types import MappingProxyType
from typing import Any

__all__ = ["ProxyPickling"]


class ProxyPickling:
    """Mixin: ``__getstate__``/``__setstate__`` that turn read-only mappings into dicts and back.

    Works for frozen dataclasses too (state is restored with ``object.__setattr__``).
    """

    def __getstate__(self) -> tuple[dict[str, Any], tuple[str, ...]]:
        state = dict(self.__dict__)
        frozen = tuple(k for k, v in state.items() if isinstance(v, MappingProxyType))
        for key in frozen:
            state[key] = dict(state[key])
        return state, frozen

    def __setstate__(self, payload: tuple[dict[str, Any], tuple[str, ...]]) -> None:
        state, frozen = payload
        for key, value in state.items():
            object.__setattr__(self, key, MappingProxyType(value) if key in frozen else value)
