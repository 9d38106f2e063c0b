"""Pickling of hipeq's read-only mappings (``types.MappingProxyType``), so that species records, reactions,
models, systems and results can be sent to other processes (dask workers) and saved.

``copyreg`` registers a reducer for ``MappingProxyType`` in this process (the pickling side): a proxy is sent as
a plain dict and wrapped again by :func:`mapping_proxy` on the receiving side, which only needs to import this
module. The registration applies to every read-only mapping pickled in a process that imported hipeq, which
is harmless: without it such a mapping cannot be pickled at all.
"""
from __future__ import annotations

import copyreg
from collections.abc import Mapping
from types import MappingProxyType
from typing import Any


def mapping_proxy(items: dict[Any, Any]) -> Mapping[Any, Any]:
    """A read-only view of ``items`` (the unpickling side of the reducer)."""
    return MappingProxyType(items)


def _reduce_mapping_proxy(proxy: MappingProxyType) -> tuple[Any, tuple[dict[Any, Any]]]:
    return mapping_proxy, (dict(proxy),)


copyreg.pickle(MappingProxyType, _reduce_mapping_proxy)
