"""Mutations of a model file's text, for fuzzing the loader.

Each mutation takes the text and a ``random.Random`` and returns new text (or bytes).
:func:`mutate` applies one to five of them. The same seed gives the same mutant, so a
failure found by the long run (tests/run_long_fuzz.py) is reproduced by its seed; the
hypothesis test draws the ``Random`` itself (``st.randoms``).
"""

from __future__ import annotations

import random
import re

#: Values that are wrong in some way for most fields: other types, wrong or missing
#: units, unicode look-alikes, huge and tiny numbers, NaN and infinity, empty text.
BAD_VALUES = [
    "1", "-1", "0", "1.5", "true", "false", "[]", "[1, 2]", '["45 bar(g)"]', "{}",
    '{ a = 1 }', "1979-05-27", "1979-05-27T07:32:00Z", "07:32:00", '""', '" "',
    '"45"', '"45 kg"', '"45 degC"', '"45 bar"', '"45 t/h"', '"45 MW"', '"45 %"',
    '"-45 bar(g)"', '"-273.15 degC"', '"-300 degC"', '"0 bar(a)"', '"1e308 bar(g)"',
    '"1e400 t/h"', '"1e-400 t/h"', '"nan bar(g)"', '"inf t/h"', '"-inf degC"', "nan",
    "inf", "-inf", "+nan", "1e400", '"NaN %"', '"4.5e3 kW"', '"45 bär(g)"',
    '"４５ bar(g)"', '"45\u00a0bar(g)"', '"45 bar(g)\u200b"', '"\U0001F525 t/h"',
    '"\u202e45 bar(g)"', '"45 \\u0000 t/h"', '"' + "9" * 400 + ' t/h"', "9" * 30,
    '"1/0 t/h"', '"45 bar(g) bar(g)"', '"45 ** 2 t/h"', '"45 t/h + 3 t/h"',
    '"1:0"', '"0:0"', '"10:0.0"', '"1:1"', '"-5:1"', '"45 degC/h"', '"45 J/kg/K/s"',
    '"45 Kv"', '"45 Cv"', '"45 EUR/GJ"', '"45 USD/GJ"', '"45 EUR"', '"EUR/t"',
    '"swing"', '"fixed"', '"off"', '"tripped"', '"auto"', '"closed"', '"fixed_power"',
    '"HP"', '"LP"', '"BFW"', '"DA"', '"no such thing"', '"a.b"', '"a' + "x" * 80 + '"',
    '"\t"', '"\\n"', "'single'", '"""multi\nline"""', "0x2A", "0o17", "0b101", "1_000",
]

_KV = re.compile(r"^(\s*)([A-Za-z0-9_\".\- ]+?)\s*=\s*(.*)$")
_NAME = re.compile(r'^\s*name\s*=\s*"([^"]*)"')


def _lines(text):
    return text.split("\n")


def drop_line(text, rng):
    ls = _lines(text)
    if ls:
        del ls[rng.randrange(len(ls))]
    return "\n".join(ls)


def duplicate_line(text, rng):
    ls = _lines(text)
    i = rng.randrange(len(ls))
    ls.insert(rng.randrange(len(ls) + 1), ls[i])
    return "\n".join(ls)


def swap_lines(text, rng):
    ls = _lines(text)
    i, j = rng.randrange(len(ls)), rng.randrange(len(ls))
    ls[i], ls[j] = ls[j], ls[i]
    return "\n".join(ls)


def replace_value(text, rng):
    ls = _lines(text)
    idx = [i for i, s in enumerate(ls) if _KV.match(s)]
    if not idx:
        return text
    i = rng.choice(idx)
    m = _KV.match(ls[i])
    ls[i] = f"{m.group(1)}{m.group(2)} = {rng.choice(BAD_VALUES)}"
    return "\n".join(ls)


def scale_number(text, rng):
    """Change the number inside a quantity: sign, zero, orders of magnitude."""
    ls = _lines(text)
    idx = [i for i, s in enumerate(ls) if re.search(r'= "[-+]?\d', s)]
    if not idx:
        return text
    i = rng.choice(idx)
    factor = rng.choice(["0", "-1", "1e-9", "1e3", "1e9", "1e300", "0.001"])

    def sub(m):
        return f'= "{float(m.group(1)) * float(factor)!r}'
    ls[i] = re.sub(r'= "([-+]?\d+\.?\d*(?:[eE][-+]?\d+)?)', sub, ls[i], count=1)
    return "\n".join(ls)


def rename_to_existing(text, rng):
    """Give an item the name of another item (a duplicate name)."""
    ls = _lines(text)
    names = [(i, _NAME.match(s).group(1)) for i, s in enumerate(ls) if _NAME.match(s)]
    if len(names) < 2:
        return text
    (i, _), (_, other) = rng.sample(names, 2)
    ls[i] = re.sub(r'"[^"]*"', f'"{other}"', ls[i], count=1)
    return "\n".join(ls)


def rename_reference(text, rng):
    """Point a reference (header, inlet, feedwater ...) at something else."""
    ls = _lines(text)
    idx = [i for i, s in enumerate(ls) if re.match(
        r"\s*(header|inlet|outlet|exhaust|feedwater|spray_supply|based_on|"
        r"blowdown_flash_header)\s*=", s)]
    if not idx:
        return text
    i = rng.choice(idx)
    ls[i] = re.sub(r'"[^"]*"', rng.choice(['"HP"', '"LLP"', '"BFW"', '"nowhere"', '"DA"',
                                            '"TG1"', '"winter"', '""']), ls[i], count=1)
    return "\n".join(ls)


def mangle_table(text, rng):
    ls = _lines(text)
    idx = [i for i, s in enumerate(ls) if s.startswith("[")]
    if not idx:
        return text
    i = rng.choice(idx)
    s = ls[i]
    ls[i] = rng.choice([s.replace("[[", "[").replace("]]", "]"), "[" + s + "]",
                        s.replace("]", ".extra]", 1), s + " # comment", "[[]]", "[",
                        s.replace("header", "headers"), s.upper(), s[:-1]])
    return "\n".join(ls)


def truncate(text, rng):
    return text[:rng.randrange(len(text) + 1)]


def insert_junk(text, rng):
    ls = _lines(text)
    junk = rng.choice([
        "x = 1", "format_version = 2", "[site]", "[[header]]", "[[case]]\nname = 'c'",
        "= 3", '"" = 1', "a.b.c = 1", "\x00", "\ufeff", "\u2028", "[[header]]\nname = 1",
        "deep = " + "[" * 200 + "]" * 200, "deep = " + "{a = " * 150 + "1" + "}" * 150,
        "deeper = " + "[" * 3000 + "]" * 3000, "big = " + "9" * 5000,
        "[station_limits]\nspray_fail = 'x'", "[[deaerator]]\nname = 'DA2'",
        "[prices]\nfuel = '9 GBP/GJ'", "[[case]]\nname = 'x'\nbased_on = 'x'",
    ])
    ls.insert(rng.randrange(len(ls) + 1), junk)
    return "\n".join(ls)


def change_case_key(text, rng):
    ls = _lines(text)
    idx = [i for i, s in enumerate(ls) if s.startswith('"') and "=" in s]
    if not idx:
        return text
    i = rng.choice(idx)
    key = rng.choice(['"user"', '"user.Nobody.demand"', '"header.HP.pressure"',
                      '"site.nothing"', '"turbine.TG1.extractions.MP.flow"',
                      '"extraction_turbine.TG2.extractions.MP.max_flow"',
                      '"extraction_turbine.TG2.extractions.LP.flow"', '"a.b.c.d.e.f"',
                      '"letdown.PRV-HM.desuperheater.approach"', '"prices.fuel"',
                      '"boiler.B1-bark.mode"', '"user.LP tracing.demand.x"', '"..."'])
    ls[i] = key + " = " + rng.choice(BAD_VALUES + ['"12 t/h"', '"off"', '"tripped"'])
    return "\n".join(ls)


MUTATIONS = [drop_line, duplicate_line, swap_lines, replace_value, replace_value,
             scale_number, rename_to_existing, rename_reference, mangle_table, truncate,
             insert_junk, change_case_key]


def mutate(text: str, rng: random.Random) -> str | bytes:
    """One to five random mutations of ``text``; now and then as raw bytes that are not
    valid UTF-8, or an empty file."""
    r = rng.random()
    if r < 0.02:
        return rng.choice(["", " ", "\n", "\ufeff", "# only a comment\n"])
    for _ in range(rng.randint(1, 5)):
        text = rng.choice(MUTATIONS)(text, rng)
    if r > 0.98:
        data = bytearray(text.encode("utf-8"))
        if data:
            data[rng.randrange(len(data))] = rng.choice([0xFF, 0xC3, 0x80, 0x00])
        return bytes(data)
    return text
