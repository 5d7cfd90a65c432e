"""Editing one value of a site file in place.

The new text is the old text with exactly one scalar (and, when the key changes, that key)
replaced at the character span libyaml reports for it: comments, order, quoting, flow or block
style and every other byte stay as they were. The caller parses the result again and checks it
differs from the original in that one element only (a value shared through a YAML anchor would
change several, and is refused).
"""
from __future__ import annotations

import yaml


class EditError(Exception):
    pass


def format_number(value: float) -> str:
    if float(value).is_integer():
        return str(int(value))
    return repr(float(value))


def _node_at(root, path: tuple):
    node = root
    for part in path:
        if isinstance(node, yaml.MappingNode) and isinstance(part, str):
            found = [(k, v) for k, v in node.value if isinstance(k, yaml.ScalarNode) and k.value == part]
            if not found:
                raise EditError(f"no key {part!r} at {path}")
            node = found[-1][1]
        elif isinstance(node, yaml.SequenceNode) and isinstance(part, int):
            node = node.value[part]
        else:
            raise EditError(f"cannot follow {path} in the file")
    return node


def set_scalar(text: str, mapping_path: tuple, key: str, value: float, drop: tuple[str, ...] = ()) -> str:
    """Set `key: value` in the mapping at `mapping_path`; a key of `drop` present there is renamed
    to `key` in place (power_kw → current_a) rather than removed and added."""
    root = yaml.compose(text, Loader=yaml.CSafeLoader)
    mapping = _node_at(root, mapping_path)
    if not isinstance(mapping, yaml.MappingNode):
        raise EditError("the element is not a mapping")
    pairs = {k.value: (k, v) for k, v in mapping.value if isinstance(k, yaml.ScalarNode)}
    new_value = format_number(value)
    if key in pairs:
        k, v = pairs[key]
        if not isinstance(v, yaml.ScalarNode):
            raise EditError(f"{key} is not a plain value")
        spans = [(v.start_mark.index, v.end_mark.index, new_value)]
        for other in drop:   # both present would be an input error; the caller checks first
            if other in pairs:
                raise EditError(f"both {key} and {other} are given")
    else:
        olds = [d for d in drop if d in pairs]
        if not olds:
            raise EditError(f"the element has neither {key} nor {', '.join(drop)}")
        k, v = pairs[olds[0]]
        spans = [(k.start_mark.index, k.end_mark.index, key), (v.start_mark.index, v.end_mark.index, new_value)]
    out = text
    for start, end, repl in sorted(spans, reverse=True):
        out = out[:start] + repl + out[end:]
    return out
