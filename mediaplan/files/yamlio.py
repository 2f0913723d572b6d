"""Safe YAML loading that remembers the line of every mapping (for one-line error messages)."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import yaml

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


def load_yaml(path: Path) -> Any:
    """Load one YAML file safely; any problem becomes a CatalogError naming the file and line."""
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError as exc:
        raise CatalogError("file is not UTF-8 text", file=str(path), hint="save it as UTF-8") from exc
    except OSError as exc:
        raise CatalogError(f"cannot read file ({exc.strerror})", file=str(path)) from exc
    try:
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
