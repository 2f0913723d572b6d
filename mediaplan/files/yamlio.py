"""Safe YAML loading that remembers the line of every mapping (for one-line error messages).

Before a catalog file is built into Python objects its event stream (libyaml's parser, which does not
recurse) is checked: mappings and lists nested at most :data:`~mediaplan.files.reading.YAML_MAX_DEPTH` deep
(the C composer recurses once per level and would crash the interpreter on a file nested 100 000 deep), at
most :data:`~mediaplan.files.reading.YAML_MAX_ALIASES` aliases, and at most
:data:`~mediaplan.files.reading.YAML_MAX_NODES` nodes with every alias written out, so that an anchor
repeated by aliases of aliases ("billion laughs") is refused before anything walks it.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import yaml

from mediaplan.files import reading
from mediaplan.medium.errors import CatalogError


class LineDict(dict):
    """A dict that knows the 1-based line where it began in its YAML file."""

    line: int = 0


# libyaml's parser where PyYAML was built with it (several times faster); both are safe loaders
_SafeBase = getattr(yaml, "CSafeLoader", yaml.SafeLoader)


class _LineLoader(_SafeBase):  # type: ignore[misc, valid-type]
    """Safe loader (no arbitrary objects) whose mappings are LineDicts."""


def _construct_mapping(loader: _LineLoader, node: yaml.MappingNode) -> LineDict:
    loader.flatten_mapping(node)
    result = LineDict()
    result.line = node.start_mark.line + 1
    for key_node, value_node in node.value:
        key = loader.construct_object(key_node, deep=True)
        if not isinstance(key, (str, int, float, bool)) and key is not None:
            raise CatalogError("mapping keys must be plain text", line=key_node.start_mark.line + 1)
        if key in result:
            raise CatalogError(f"key {key!r} appears twice", line=key_node.start_mark.line + 1,
                               hint="keep one of them")
        result[key] = loader.construct_object(value_node, deep=True)
    return result


_LineLoader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, _construct_mapping)


_OPEN = (yaml.MappingStartEvent, yaml.SequenceStartEvent)
_CLOSE = (yaml.MappingEndEvent, yaml.SequenceEndEvent)


def check_shape(text: str, file: str | None = None) -> None:
    """Refuse YAML text nested too deep, with too many aliases, or too large with its aliases written out
    (limits in :mod:`mediaplan.files.reading`); reads only the parser's events, builds nothing."""
    sizes: dict[str, int] = {}  # anchor -> nodes it stands for
    stack: list[list] = []  # [anchor, nodes so far] of each open mapping or list
    aliases = 0
    for event in yaml.parse(text, Loader=_SafeBase):
        size = 0
        if isinstance(event, _OPEN):
            stack.append([event.anchor, 1])
            if len(stack) > reading.YAML_MAX_DEPTH:
                raise reading.too_deep("catalog", file, reading.YAML_MAX_DEPTH, event.start_mark.line + 1)
            continue
        if isinstance(event, _CLOSE):
            anchor, size = stack.pop()
        elif isinstance(event, yaml.ScalarEvent):
            anchor, size = event.anchor, 1
        elif isinstance(event, yaml.AliasEvent):
            aliases += 1
            if aliases > reading.YAML_MAX_ALIASES:
                raise CatalogError(f"more than {reading.YAML_MAX_ALIASES} aliases (*name)", file=file,
                                   line=event.start_mark.line + 1, hint="write the entries out in full")
            anchor, size = None, sizes.get(event.anchor, 1)
        else:
            continue
        if anchor:
            sizes[anchor] = size
        if stack:
            stack[-1][1] += size
            if stack[-1][1] > reading.YAML_MAX_NODES:
                raise CatalogError(f"more than {reading.YAML_MAX_NODES} values with its aliases written out",
                                   file=file, line=event.start_mark.line + 1,
                                   hint="an anchor repeated by aliases of aliases; write the entries out in full")


def load_yaml(path: Path) -> Any:
    """Load one YAML file safely; any problem becomes a CatalogError naming the file and line.

    Only a regular UTF-8 file of at most 4 MiB is read (:mod:`mediaplan.files.reading`), and its shape is
    checked (:func:`check_shape`) before it is built.
    """
    text = reading.read_text(path, "catalog")
    try:
        check_shape(text, str(path))
        return yaml.load(text, Loader=_LineLoader)  # noqa: S506 - _LineLoader derives from (C)SafeLoader
    except CatalogError as exc:
        raise exc.located(file=str(path)) from None
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        line = mark.line + 1 if mark else None
        problem = (exc.problem or exc.context or "malformed YAML").strip()
        raise CatalogError(f"malformed YAML: {problem}", file=str(path), line=line,
                           hint="check indentation, colons and quotes") from None
    except yaml.YAMLError as exc:
        raise CatalogError(f"malformed YAML: {exc}", file=str(path)) from None
