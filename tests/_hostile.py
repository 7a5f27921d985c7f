"""A generated corpus of hostile inputs: the four file kinds of the command line and the web form.

Each case is what a careless user or an attacker might hand stowflow: a number that is no
number (``nan``, ``1e309``, full-width digits, 5,000 digits), a value far outside its range,
a wrong type, a missing or unknown key, 5,000 nested brackets, binary bytes, a broken quote,
a file of the wrong kind.  The cases are generated from small valid bases (invented data)
with a seeded random choice, so the corpus is the same on every run.

* :func:`cli_cases`: (kind, name, build) where ``build(folder)`` writes the files and returns
  the command line; kinds ``cycle`` (``stowflow check``), ``catalogue`` (``stowflow design
  --catalogue``), ``design`` (``stowflow simulate``), ``schedule`` (``stowflow simulate
  --schedule``).
* :func:`web_cases`: (name, files, fields) posted to the upload form.

The promise checked by tests/test_hostile.py: exit code 2 with one line naming the file, or
a valid result (0, or 1 for "no design exists" / "fails verification"), never an internal
error, never a hang.  Nothing here checks the physics.
"""

from __future__ import annotations

import json
import random
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from _web_server import TINY

__all__ = [
    "BASE_CATALOGUE",
    "BASE_DESIGN",
    "CYCLE",
    "CliCase",
    "WebCase",
    "cli_cases",
    "web_cases",
]

#: Invented three-phase cycle: press, hold, return.
CYCLE = TINY

#: Header of a phase table with a pressure column.
PHASES = "duration [s], flow [L/min], pressure [bar]"

#: Invented catalogue: two bladders, two pumps, two motors (the design on CYCLE takes 0.2 s).
BASE_CATALOGUE = """\
currency = "EUR"
[[accumulator]]
type = "bladder"
nominal_volume_l = 10
max_pressure_bar = 330
price = 1000
[[accumulator]]
type = "bladder"
nominal_volume_l = 20
max_pressure_bar = 330
price = 1500
[[pump]]
displacement_cm3 = 10
speed_rpm = 1450
max_pressure_bar = 250
volumetric_efficiency = 0.93
overall_efficiency = 0.85
price = 500
[[pump]]
displacement_cm3 = 40
speed_rpm = 1450
max_pressure_bar = 250
volumetric_efficiency = 0.93
overall_efficiency = 0.85
price = 900
[[motor]]
rated_kw = 5.5
efficiency = 0.9
price = 400
[[motor]]
rated_kw = 22
efficiency = 0.93
price = 1200
"""

#: Invented design on CYCLE, in design.json's contract keys (ideal gas: fast to simulate).
BASE_DESIGN: dict = {
    "schema": "stowflow.design/1",
    "gas_model": "ideal",
    "process": "polytropic",
    "polytropic_index": 1.33,
    "temperature_c": {"min": 10.0, "max": 50.0},
    "accumulator": {
        "type": "bladder",
        "nominal_volume_l": 16.0,
        "count": 1,
        "precharge_bar_at_20c": 133.0,
        "min_pressure_bar": 164.2,
        "max_pressure_bar": 199.3,
        "max_allowable_pressure_bar": 330.0,
    },
    "pump": {
        "displacement_cm3": 10.0,
        "speed_rpm": 1450.0,
        "flow_lpm": 13.485,
        "max_pressure_bar": 250.0,
        "volumetric_efficiency": 0.93,
        "overall_efficiency": 0.85,
    },
    "motor": {"rated_kw": 5.5, "efficiency": 0.896},
    "relief_bar": 219.3,
    "setpoints": {"load_below_bar": 197.3, "unload_above_bar": 199.3},
}

#: Text that is not a plain number, or a number out of any range.
BAD_NUMBERS = (
    "nan",
    "inf",
    "-inf",
    "-1",
    "0",
    "1e309",
    "1e-320",
    "1e-300",
    "1e30",
    "１０",
    "٣",
    "1_000",
    "0x10",
    "1,5",
    "--1",
    "1e",
    ".",
    "+",
    "9" * 5000,
    "1\u00a0000",
    "10 bar",
    "1e9",
    "½",
    "١٢",
    "𝟙𝟚",
)
#: JSON values that are no number or out of every range.
BAD_JSON_VALUES = (
    -1,
    0,
    1e-12,
    1e12,
    1e30,
    10**30,
    10**400,
    "12",
    "１２",
    True,
    None,
    [],
    {},
    2.5,
    -0.0,
    1e308,
    5e-324,
)


@dataclass(frozen=True)
class CliCase:
    """One hostile input for the command line.

    Attributes
    ----------
    kind : str
        ``cycle``, ``catalogue``, ``design`` or ``schedule``.
    name : str
        Test id.
    build : callable
        ``build(folder) -> (argv, file name)``: writes the files, returns the command line
        and the name of the hostile file (which a refusal must name).
    """

    kind: str
    name: str
    build: Callable[[Path], tuple[list[str], str]]


@dataclass(frozen=True)
class WebCase:
    """One hostile upload: (name, files {field: (filename, bytes)}, text fields)."""

    name: str
    files: dict
    fields: dict


def _write(folder: Path, name: str, data: bytes | str) -> Path:
    path = folder / name
    path.write_bytes(data if isinstance(data, bytes) else data.encode("utf-8"))
    return path


# --------------------------------------------------------------------------- cycle CSV
def _cycle_texts(rng: random.Random) -> list[tuple[str, bytes | str]]:
    rows = CYCLE.splitlines()
    out: list[tuple[str, bytes | str]] = []
    # every hostile number in every numeric column of one row
    for value in BAD_NUMBERS:
        col = rng.randrange(3)
        row = rng.randrange(1, 4)
        cells = rows[row].split(", ")
        cells[col] = value
        out.append(
            (
                f"cell-{col}-{value[:12]!r}",
                "\n".join([*rows[:row], ", ".join(cells), *rows[row + 1 :]]),
            )
        )
    header_cells = (
        "duration [s], flow [L/min], pressure [bar], label [s]",
        "duration [s], flow [L/min/s], pressure [bar]",
        "duration [s], flow [bar], pressure [bar]",
        "duration [°C], flow [L/min], pressure [bar]",
        "duration [s], flow [L/min], flow [L/min]",
        "duration, flow [L/min]",
        "duration [s]; flow [L/min], pressure [bar]",
        "time [s], duration [s], flow [L/min]",
        "duration [s], flow [L/min], pressure [bar], " + "x" * 10_000,
        "duration [s], flow [L/min], pressure [ｂａｒ]",
        "duration [s], flow [L/min], pressure [bar\n",
        '"duration [s]", "flow\n[L/min]", pressure [bar]',
        "\ufeffduration [s], flow [L/min], pressure [bar], label",
        "duration [s], flow [m³/h], pressure [psi]",
        "duration [s], flow [1e9 L/min], pressure [bar]",
    )
    for i, header in enumerate(header_cells):
        out.append((f"header-{i}", "\n".join([header, "1, 10, 100, a", "2, 0, 50, b"])))
    structure = {
        "empty": b"",
        "blank": b"\n\n   \n",
        "comments": b"# x\n# y\n",
        "header-only": b"duration [s], flow [L/min]\n",
        "nul": b"duration [s], flow [L/min]\n1, 10\x00\n",
        "latin1": "duration [s], flow [L/min], label\n1, 10, caf\xe9\n".encode("latin-1"),
        "utf16": CYCLE.encode("utf-16"),
        "zip": b"PK\x03\x04" + bytes(rng.randrange(256) for _ in range(200)),
        "pdf": b"%PDF-1.4\n" + b"x" * 100,
        "random-bytes": bytes(rng.randrange(256) for _ in range(500)),
        "control-char": "duration [s], flow [L/min]\n1, 10\x07\n",
        "unbalanced-quote": 'duration [s], flow [L/min], label\n1, 10, "open\n2, 0, b\n',
        "quoted-newline-label": 'duration [s], flow [L/min], label\n1, 10, "two\nlines"\n2, 0, b\n',
        "quoted-newline-number": 'duration [s], flow [L/min]\n"1\n", 10\n2, 0\n',
        "extra-field": "duration [s], flow [L/min]\n1, 10, 3\n",
        "missing-field": "duration [s], flow [L/min]\n1\n",
        "trailing-sep": "duration [s], flow [L/min]\n1, 10,\n",
        "crlf": CYCLE.replace("\n", "\r\n"),
        "cr-only": CYCLE.replace("\n", "\r"),
        "all-zero-flow": "duration [s], flow [L/min]\n1, 0\n2, 0\n",
        "one-sample": "time [s], flow [L/min]\n0, 10\n",
        "time-back": "time [s], flow [L/min], pressure [bar]\n0, 10, 100\n2, 5, 100\n1, 0, 100\n",
        "time-dup": "time [s], flow [L/min], pressure [bar]\n0, 10, 100\n0, 5, 100\n",
        "negative-time": "time [s], flow [L/min], pressure [bar]\n-1, 10, 100\n1, 5, 100\n",
        "long-line": "duration [s], flow [L/min]\n1, 10" + " " * 1_000_000 + "\n",
        "many-rows": "duration [s], flow [L/min], pressure [bar]\n"
        + "".join(f"{1 + i % 7 * 1e-3:.4f}, {i % 13}, 100\n" for i in range(30_000)),
        "tiny-steps": f"{PHASES}\n0.000001, 10, 100\n1000, 0, 100\n",
        "odd-steps": f"{PHASES}\n0.1234567, 10, 100\n1.7654321, 0, 50\n",
        "no-pressure": "duration [s], flow [L/min]\n1, 10\n2, 0\n",
        "formula-label": 'duration [s], flow [L/min], label\n1, 10, "=1+1"\n2, 0, @SUM(A1)\n',
        "mixed-seps": "duration [s], flow [L/min]\n1; 10\n",
        "tab": CYCLE.replace(", ", "\t"),
        "huge-flow": "duration [s], flow [L/min], pressure [bar]\n1, 1e300, 100\n",
        "tiny-flow": "duration [s], flow [L/min], pressure [bar]\n1, 1e-300, 100\n1, 0, 100\n",
    }
    out += list(structure.items())
    return out


# --------------------------------------------------------------------------- catalogue TOML
def _catalogue_texts(rng: random.Random) -> list[tuple[str, bytes | str]]:
    lines = BASE_CATALOGUE.splitlines()
    numeric = [i for i, line in enumerate(lines) if "=" in line and '"' not in line]
    out: list[tuple[str, bytes | str]] = []
    toml_values = (
        "nan",
        "inf",
        "-inf",
        "-1",
        "0",
        "1e309",
        "1e-320",
        "1e30",
        '"10"',
        '"１０"',
        "true",
        "[]",
        "{}",
        "9" * 5000,
        "1979-05-27",
        "0x7fffffffffffffff",
        "[" * 40 + "]" * 40,
    )
    for value in toml_values:
        for i in rng.sample(numeric, 2):
            key = lines[i].split("=")[0].strip()
            changed = [*lines[:i], f"{key} = {value}", *lines[i + 1 :]]
            out.append((f"{key}={value[:12]}", "\n".join(changed)))
    deep = {
        "arrays-5000": "x = " + "[" * 5000 + "]" * 5000,
        "arrays-33": "x = " + "[" * 33 + "]" * 33,
        "inline-tables": "x = " + "{a = " * 3000 + "1" + "}" * 3000,
        "dotted-keys": "a" + ".a" * 20_000 + " = 1",
        "table-header": "[" + ".".join(["a"] * 20_000) + "]",
        "string-brackets": 'currency = "' + "[" * 5000 + '"\n' + BASE_CATALOGUE.split("\n", 1)[1],
        "comment-brackets": "# " + "[" * 5000 + "\n" + BASE_CATALOGUE,
        "multiline-string": 'notes = """\n' + "[" * 5000 + '\n"""\n' + BASE_CATALOGUE,
    }
    out += list(deep.items())
    edits = {
        "unknown-key": BASE_CATALOGUE.replace("price = 500", "price = 500\ncolour = 1"),
        "unknown-top": "pumps = 3\n" + BASE_CATALOGUE,
        "no-motor": BASE_CATALOGUE.split("[[motor]]")[0],
        "no-pump": BASE_CATALOGUE.replace("[[pump]]", "[[motorx]]"),
        "pump-not-array": "pump = 3\n" + BASE_CATALOGUE.replace("[[pump]]", "[[motor]]"),
        "dup-names": BASE_CATALOGUE.replace('type = "bladder"', 'type = "bladder"\nname = "x"'),
        "bad-type": BASE_CATALOGUE.replace('type = "bladder"', 'type = "balloon"', 1),
        "piston-no-bore": BASE_CATALOGUE.replace('type = "bladder"', 'type = "piston"', 1),
        "efficiency-6": BASE_CATALOGUE.replace("efficiency = 0.9\n", "efficiency = 6\n"),
        "overall-above-vol": BASE_CATALOGUE.replace(
            "overall_efficiency = 0.85", "overall_efficiency = 0.99", 1
        ),
        "limits-negative": BASE_CATALOGUE + "\n[limits.bladder]\nmax_pressure_ratio = -3\n",
        "limits-unknown": BASE_CATALOGUE + "\n[limits.bladder]\nratio = 3\n",
        "limits-type": BASE_CATALOGUE + "\n[limits.balloon]\nmax_pressure_ratio = 3\n",
        "limits-string": BASE_CATALOGUE + '\n[limits.bladder]\nmax_pressure_ratio = "3"\n',
        "limits-not-table": "limits = 3\n" + BASE_CATALOGUE,
        "limits-nested": BASE_CATALOGUE + "\n[limits.bladder.x]\ny = 1\n",
        "limits-valid": BASE_CATALOGUE + "\n[limits.bladder]\nmax_pressure_ratio = 3.5\n",
        "currency-list": BASE_CATALOGUE.replace('currency = "EUR"', "currency = [1]"),
        "notes-number": "notes = 3\n" + BASE_CATALOGUE,
        "syntax": BASE_CATALOGUE + "\n[[pump]\n",
        "latin1": (BASE_CATALOGUE + '\nnotes = "caf\xe9"\n').encode("latin-1"),
        "utf16": BASE_CATALOGUE.encode("utf-16"),
        "binary": bytes(rng.randrange(256) for _ in range(300)),
        "empty": b"",
        "bom": "\ufeff" + BASE_CATALOGUE,
        "huge-name": BASE_CATALOGUE.replace(
            "price = 400", f'price = 400\nname = "{"n" * 100_000}"'
        ),
        "many-rows": BASE_CATALOGUE
        + "".join(
            f'[[accumulator]]\ntype = "bladder"\nnominal_volume_l = {1 + i}\n'
            f"max_pressure_bar = 330\nprice = {100 + i}\n"
            for i in range(2000)
        ),
        "over-8mb": BASE_CATALOGUE + "#" + "x" * 8_100_000 + "\n",
        "valid": BASE_CATALOGUE,
    }
    out += list(edits.items())
    return out


# --------------------------------------------------------------------------- design.json
def _set(d: dict, path: tuple[str, ...], value) -> dict:
    d = json.loads(json.dumps(d))
    node = d
    for key in path[:-1]:
        node = node[key]
    if value is _DELETE:
        node.pop(path[-1], None)
    else:
        node[path[-1]] = value
    return d


_DELETE = object()


def _design_texts(rng: random.Random) -> list[tuple[str, bytes | str]]:
    paths = [
        ("accumulator", "nominal_volume_l"),
        ("accumulator", "count"),
        ("accumulator", "precharge_bar_at_20c"),
        ("accumulator", "min_pressure_bar"),
        ("accumulator", "max_pressure_bar"),
        ("accumulator", "max_allowable_pressure_bar"),
        ("pump", "displacement_cm3"),
        ("pump", "speed_rpm"),
        ("pump", "flow_lpm"),
        ("pump", "max_pressure_bar"),
        ("pump", "volumetric_efficiency"),
        ("pump", "overall_efficiency"),
        ("motor", "rated_kw"),
        ("motor", "efficiency"),
        ("relief_bar",),
        ("polytropic_index",),
        ("temperature_c", "min"),
        ("temperature_c", "max"),
        ("setpoints", "load_below_bar"),
        ("setpoints", "unload_above_bar"),
    ]
    out: list[tuple[str, bytes | str]] = []
    for path in paths:
        for value in rng.sample(BAD_JSON_VALUES, 3):
            text = json.dumps(_set(BASE_DESIGN, path, value))
            out.append((f"{'.'.join(path)}={str(value)[:12]}", text))
    # one catalogue-matched pump turned into a pump of its own: its numbers are used
    own = {**BASE_DESIGN["pump"], "displacement_cm3": 11.0, "flow_lpm": None}
    targeted = {
        "relief-550-ps-330": _set(BASE_DESIGN, ("relief_bar",), 550),
        "relief-below-window": _set(BASE_DESIGN, ("relief_bar",), 150),
        "pump-efficiency-6": _set(
            _set(BASE_DESIGN, ("pump",), own), ("pump", "overall_efficiency"), 6
        ),
        "motor-efficiency-6": _set(
            _set(BASE_DESIGN, ("motor", "rated_kw"), 5.6), ("motor", "efficiency"), 6
        ),
        "count-1e30": _set(BASE_DESIGN, ("accumulator", "count"), 10**30),
        "volume-1e12": _set(BASE_DESIGN, ("accumulator", "nominal_volume_l"), 1e12),
        "volume-1e-12": _set(BASE_DESIGN, ("accumulator", "nominal_volume_l"), 1e-12),
        "setpoints-1e9": _set(
            BASE_DESIGN, ("setpoints",), {"load_below_bar": 1e9, "unload_above_bar": 2e9}
        ),
        "setpoints-inverted": _set(
            BASE_DESIGN, ("setpoints",), {"load_below_bar": 199, "unload_above_bar": 150}
        ),
        "setpoints-one": _set(BASE_DESIGN, ("setpoints",), {"load_below_bar": 199}),
        "setpoints-above-ps": _set(
            BASE_DESIGN, ("setpoints",), {"load_below_bar": 300, "unload_above_bar": 340}
        ),
        "pump-1e9": _set(
            BASE_DESIGN, ("pump",), {**own, "displacement_cm3": 1e9, "speed_rpm": 1e9}
        ),
        "pump-stiff": _set(
            BASE_DESIGN, ("pump",), {"displacement_cm3": 10_000, "speed_rpm": 10_000}
        ),
        "pump-stiff-tiny-bank": _set(
            _set(BASE_DESIGN, ("pump",), {"displacement_cm3": 10_000, "speed_rpm": 10_000}),
            ("accumulator", "nominal_volume_l"),
            0.01,
        ),
        "pump-stiff-real": _set(
            _set(BASE_DESIGN, ("pump",), {"displacement_cm3": 10_000, "speed_rpm": 10_000}),
            ("gas_model",),
            "real",
        ),
        "flow-above-displacement": _set(BASE_DESIGN, ("pump",), {**own, "flow_lpm": 1000}),
        "temperature-300": _set(BASE_DESIGN, ("temperature_c",), {"min": 10, "max": 300}),
        "temperature-inverted": _set(BASE_DESIGN, ("temperature_c",), {"min": 50, "max": 10}),
        "temperature-kelvin": _set(BASE_DESIGN, ("temperature_c",), {"min": 283.15, "max": 323.15}),
        "process-banana": _set(BASE_DESIGN, ("process",), "banana"),
        "process-polytropic-0": _set(BASE_DESIGN, ("polytropic_index",), 0.5),
        "type-balloon": _set(BASE_DESIGN, ("accumulator", "type"), "balloon"),
        "type-number": _set(BASE_DESIGN, ("accumulator", "type"), 3),
        "piston-no-bore": _set(BASE_DESIGN, ("accumulator", "type"), "piston"),
        "gas-plasma": _set(BASE_DESIGN, ("gas_model",), "plasma"),
        "schema-2": _set(BASE_DESIGN, ("schema",), "stowflow.design/2"),
        "no-schema": _set(BASE_DESIGN, ("schema",), _DELETE),
        "no-pump": _set(BASE_DESIGN, ("pump",), _DELETE),
        "no-motor": _set(BASE_DESIGN, ("motor",), _DELETE),
        "pump-list": _set(BASE_DESIGN, ("pump",), [1, 2]),
        "pump-only": _set(BASE_DESIGN, ("accumulator",), None),
        "pump-only-no-relief": _set(
            _set(BASE_DESIGN, ("accumulator",), None), ("relief_bar",), _DELETE
        ),
        "no-relief": _set(BASE_DESIGN, ("relief_bar",), _DELETE),
        "real-gas": _set(BASE_DESIGN, ("gas_model",), "real"),
        "valid": BASE_DESIGN,
    }
    out += [(name, json.dumps(d)) for name, d in targeted.items()]
    raw = {
        "nested-objects": '{"a":' * 100_000 + "1" + "}" * 100_000,
        "nested-arrays": "[" * 100_000 + "]" * 100_000,
        "nested-33": '{"schema": ' + "[" * 33 + "]" * 33 + "}",
        "not-object": "[1, 2, 3]",
        "string": '"design"',
        "empty": "",
        "truncated": json.dumps(BASE_DESIGN)[:-20],
        "nan-literal": json.dumps(BASE_DESIGN).replace("133.0", "NaN"),
        "infinity-literal": json.dumps(BASE_DESIGN).replace("133.0", "Infinity"),
        "big-int": json.dumps(BASE_DESIGN).replace("133.0", "1" + "0" * 5000),
        "latin1": '{"schema": "caf\xe9"}'.encode("latin-1"),
        "bom": "\ufeff" + json.dumps(BASE_DESIGN),
        "huge-string": json.dumps(_set(BASE_DESIGN, ("pump", "name"), "p" * 1_000_000)),
        "brackets-in-strings": json.dumps(_set(BASE_DESIGN, ("pump", "name"), "[{" * 5000)),
        "duplicate-keys": json.dumps(BASE_DESIGN)[:-1] + ', "relief_bar": 9e99}',
    }
    out += list(raw.items())
    return out


# --------------------------------------------------------------------------- schedule.csv
def _schedule_texts(rng: random.Random) -> list[tuple[str, bytes | str]]:
    header = (
        "time [s],demand [L/min],pump_loaded,pump_flow [L/min],accumulator_oil [L],"
        "relief_flow [L/min],label"
    )
    # The invented design's pump (13.485 L/min) on CYCLE's ten 1 s steps, balanced.
    # The pump delivers 2.2475 L per cycle, the machine draws 2 L: the relief valve takes
    # the rest (14.85 L/min) in the last step, over a full store.
    oil, rows = 2.0, []
    demand = [60, 60, 0, 0, 0, 0, 0, 0, 0, 0]
    for t, d in enumerate(demand):
        relief = 14.85 if t == len(demand) - 1 else 0.0
        oil += (13.485 - relief - d) / 60
        rows.append([t, d, 1, 13.485, round(oil, 6), relief, "x"])

    def text(rows) -> str:
        return header + "\n" + "\n".join(",".join(str(c) for c in r) for r in rows) + "\n"

    out: list[tuple[str, bytes | str]] = [("valid", text(rows))]
    for value in BAD_NUMBERS:
        bad = [list(r) for r in rows]
        bad[rng.randrange(len(bad))][rng.choice((3, 4, 5))] = value
        out.append((f"cell-{value[:12]!r}", text(bad)))
    out += [
        ("no-oil-column", text(rows).replace("accumulator_oil [L]", "oil")),
        ("no-header", "\n".join(",".join(str(c) for c in r) for r in rows)),
        ("short-row", text(rows) + "1,2\n"),
        ("quoted-newline-label", text(rows).replace(",x\n", ',"a\nb"\n', 1)),
        ("unbalanced-quote", text(rows).replace(",x\n", ',"a\n', 1)),
        ("binary", bytes(rng.randrange(256) for _ in range(400))),
        ("empty", b""),
        ("utf16", text(rows).encode("utf-16")),
        ("too-few-rows", text(rows[:3])),
        ("oil-beyond-bank", text([[*r[:4], r[4] + 100, *r[5:]] for r in rows])),
        ("pump-beyond", text([[*r[:3], 1000, *r[4:]] for r in rows])),
    ]
    return out


def _cycle_argv(folder: Path, path: Path) -> list[str]:
    return ["check", str(path)]


def _catalogue_argv(folder: Path, path: Path) -> list[str]:
    cycle = _write(folder, "cycle.csv", CYCLE)
    argv = ["design", str(cycle), "--catalogue", str(path), "--gas", "ideal"]
    return [*argv, "--no-verify", "--out", str(folder / "out")]


def _design_argv(folder: Path, path: Path) -> list[str]:
    cycle = _write(folder, "cycle.csv", CYCLE)
    return ["simulate", str(path), str(cycle), "--controller", "pressure-switch"]


def _schedule_argv(folder: Path, path: Path) -> list[str]:
    cycle = _write(folder, "cycle.csv", CYCLE)
    design = _write(folder, "design.json", json.dumps(BASE_DESIGN))
    argv = ["simulate", str(design), str(cycle), "--schedule", str(path)]
    return [*argv, "--controller", "schedule"]


#: Kind → (texts, name of the hostile file, command line for it).
_KINDS = {
    "cycle": (_cycle_texts, "hostile_cycle.csv", _cycle_argv),
    "catalogue": (_catalogue_texts, "hostile_catalogue.toml", _catalogue_argv),
    "design": (_design_texts, "hostile_design.json", _design_argv),
    "schedule": (_schedule_texts, "hostile_schedule.csv", _schedule_argv),
}


def cli_cases(seed: int = 15) -> list[CliCase]:
    """The command-line corpus (same cases for the same seed)."""
    rng = random.Random(seed)
    cases = []
    for kind, (texts, filename, argv) in _KINDS.items():
        for name, text in texts(rng):

            def build(folder: Path, text=text, filename=filename, argv=argv):
                path = _write(folder, filename, text)
                return argv(folder, path), path.name

            cases.append(CliCase(kind, name, build))
    return cases


# --------------------------------------------------------------------------- web form
def web_cases(seed: int = 15) -> list[WebCase]:
    """The upload-form corpus: hostile cycles, catalogues and settings fields."""
    rng = random.Random(seed)
    cases: list[WebCase] = []
    cycles = _cycle_texts(rng)
    for name, text in rng.sample(cycles, 20):
        data = text if isinstance(text, bytes) else text.encode("utf-8")
        cases.append(WebCase(f"cycle-{name}", {"cycle": ("hostile.csv", data)}, {}))
    catalogues = [c for c in _catalogue_texts(rng) if c[0] != "over-8mb"]
    for name, text in rng.sample(catalogues, 15):
        data = text if isinstance(text, bytes) else text.encode("utf-8")
        files = {"cycle": ("cycle.csv", CYCLE.encode()), "catalogue": ("hostile.toml", data)}
        cases.append(WebCase(f"catalogue-{name}", files, {}))
    fields = {
        "d_temperature": ("1e9", "..", "１０..５０", "-300..20", "50..10", "x" * 1999),
        "d_line_loss": ("nan", "-1bar", "1e9bar", "5 furlongs"),
        "d_max_count": ("1e9", "0", "٣"),
        "d_types": ("balloon", ",,,", ""),
        "d_process": ("polytropic:99", "polytropic:", "auto"),
        "c_energy_price": ("-1/kWh", "1e308/kWh", "0.25/furlong"),
        "min_pressure": ("1e9bar", "-1bar"),
        "step": ("0s", "1e-9s", "7s"),
    }
    for field, values in fields.items():
        for value in values:
            files = {"cycle": ("cycle.csv", CYCLE.encode())}
            cases.append(WebCase(f"field-{field}-{value[:12]}", files, {field: value}))
    return cases
