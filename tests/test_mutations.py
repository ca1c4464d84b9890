"""Every key of every demo mutated: plan answers with valid JSON or one line and exit 2.

Each key is deleted, set to zero, negative, huge, NaN, infinite or to a value of the wrong
type; `plan --json` must then either succeed with strict JSON (no NaN or Infinity tokens)
or refuse with one line and exit code 2. Never a traceback.
"""

from __future__ import annotations

import json
import math
import tomllib

import pytest
from demos import DEMOS, DESIGNS

from fab.cli import main

MUTATIONS = ("delete", "zero", "negative", "huge", "nan", "inf", "wrong type")


def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    return str(v)


def _dump(data: dict) -> str:
    lines = [f"{k} = {_toml_value(v)}" for k, v in data.items() if not isinstance(v, dict)]
    for section, table in data.items():
        if isinstance(table, dict):
            lines.append(f"\n[{section}]")
            lines += [f"{k} = {_toml_value(v)}" for k, v in table.items()]
    return "\n".join(lines) + "\n"


def _mutated(value, how):
    if how == "zero":
        return 0 if isinstance(value, int) and not isinstance(value, bool) else 0.0
    if how == "negative":
        return -abs(value) if isinstance(value, int | float) and not isinstance(value, bool) else -1
    if how == "huge":
        return 10**12 if isinstance(value, int) and not isinstance(value, bool) else 1.7e308
    if how == "nan":
        return float("nan")
    if how == "inf":
        return float("inf")
    return [1, 2] if isinstance(value, str) else "text"


def _cases():
    for demo in DEMOS:
        data = tomllib.loads((DESIGNS / f"{demo}.toml").read_text(encoding="utf-8"))
        for section, table in data.items():
            keys = [(section, k) for k in table] if isinstance(table, dict) else [(None, section)]
            for sec, key in keys:
                for how in MUTATIONS:
                    yield pytest.param(demo, sec, key, how, id=f"{demo}-{sec or ''}.{key}-{how}")


@pytest.mark.parametrize(("demo", "section", "key", "how"), list(_cases()))
def test_mutated_key_is_answered_or_refused_in_one_line(tmp_path, capsys, demo, section, key, how):
    data = tomllib.loads((DESIGNS / f"{demo}.toml").read_text(encoding="utf-8"))
    table = data[section] if section else data
    if how == "delete":
        del table[key]
    else:
        table[key] = _mutated(table[key], how)
    path = tmp_path / f"{demo}.toml"
    path.write_text(_dump(data), encoding="utf-8")
    capsys.readouterr()
    code = 0
    try:
        main(["plan", str(path), "--json"])
    except SystemExit as exc:
        code = exc.code
    out, err = capsys.readouterr()
    assert code in (0, 2), err
    if code == 0:

        def refuse(token):
            raise AssertionError(f"non-standard JSON token {token}")

        json.loads(out, parse_constant=refuse)
    else:
        assert out == "" and err.startswith("Error: ") and err.count("\n") == 1, err
