"""excerpts.py - readers for the committed excerpts of published data files in
tests/data: the AME2020 table mass_1.mas20 and NIST's CODATA 2018 listing
allascii.txt.  Both are fixed-width text.  The AME reader takes its column
layout from the Fortran format line in the file's own header, so the layout
comes from the source, not from us.

These readers see outside input, so they are strict: the file size and line
length are capped, every field must have the shape the format promises, and
anything else raises ExcerptError naming the file, the line number and the
bad text.  No other exception may escape (tests/ref/test_excerpt_fuzz.sh
checks that with mutated copies).  Numbers are returned as decimal strings
and decimal.Decimal values, never floats, so no digit is lost here.
"""
import decimal
import re

MAX_BYTES = 1 << 20        # both excerpts are a few kB; the full AME file is 0.5 MB
MAX_LINE = 200             # the widest line of either format is 135 characters


class ExcerptError(ValueError):
    """A line of an excerpt does not have the published layout."""


def _read_lines(path):
    with open(path, "rb") as f:
        raw = f.read(MAX_BYTES + 1)
    if len(raw) > MAX_BYTES:
        raise ExcerptError(f"{path}: larger than {MAX_BYTES} bytes; not an excerpt")
    try:
        text = raw.decode("ascii")
    except UnicodeDecodeError as err:
        raise ExcerptError(f"{path}: byte {err.start} is not ASCII (0x{raw[err.start]:02x})") from None
    lines = text.split("\n")
    if lines and lines[-1] == "":
        lines.pop()
    for number, line in enumerate(lines, 1):
        if len(line) > MAX_LINE:
            raise ExcerptError(f"{path}:{number}: line of {len(line)} characters, longer than {MAX_LINE}")
        if "\t" in line or "\r" in line:
            raise ExcerptError(f"{path}:{number}: tab or carriage return in a fixed-width line: {line!r}")
    return lines


# ---------------------------------------------------------------------------
# AME2020 mass_1.mas20
# ---------------------------------------------------------------------------

# Names of the non-blank fields of a data line, in the order of the header's
# format "a1,i3,i5,i5,i5,1x,a3,a4,1x,f14.6,f12.6,f13.5,1x,f10.5,1x,a2,f13.5,
# f11.5,1x,i3,1x,f13.6,f12.6" and its legend "cc NZ N Z A el o mass unc
# binding unc B beta unc atomic_mass unc".
AME_FIELDS = ("cc", "n_minus_z", "n", "z", "a", "element", "origin",
              "mass_excess_keV", "mass_excess_unc_keV", "binding_per_a_keV", "binding_unc_keV",
              "beta_kind", "beta_keV", "beta_unc_keV",
              "mass_u_integer", "mass_micro_u_fraction", "mass_unc_micro_u")

_FORTRAN_ITEM = re.compile(r"^(?:([aiAI])(\d+)|([fF])(\d+)\.(\d+)|(\d+)[xX])$")


def fortran_columns(fmt):
    """([(kind, first, end)], [blank positions]) for a Fortran format such as
    "a1,i3,1x,f14.6": kind 'a', 'i' or 'f' with its Python slice [first:end]
    for each value item, and the character positions of the Nx items, which
    a line must leave blank."""
    columns, blanks, pos = [], [], 0
    for item in fmt.split(","):
        m = _FORTRAN_ITEM.match(item.strip())
        if not m:
            raise ExcerptError(f"format item {item!r} is not aN, iN, fW.D or Nx")
        if m.group(6):
            blanks.extend(range(pos, pos + int(m.group(6))))
            pos += int(m.group(6))
            continue
        kind = (m.group(1) or m.group(3)).lower()
        width = int(m.group(2) or m.group(4))
        if width == 0:
            raise ExcerptError(f"format item {item!r} has zero width")
        columns.append((kind, pos, pos + width))
        pos += width
    return columns, blanks


# A fixed-point number; AME writes '#' in place of the decimal point for an
# estimated (non-experimental) value.
_AME_DECIMAL = re.compile(r"^-?\d+(?:[.#]\d*)?$")
_AME_FRACTION = re.compile(r"^\d{6}(?:\.\d+|#\d*)$")   # micro-u part of the mass: 6 digits, point, decimals
_ELEMENT = re.compile(r"^[A-Z][a-z]?$")


def _ame_field(where, name, text, kind):
    value = text.strip()
    if kind == "i":
        if not re.match(r"^-?\d+$", value):
            raise ExcerptError(f"{where}: field {name} must be an integer, got {text!r}")
        return int(value)
    if kind == "f":
        if value == "*" and name in ("beta_keV",):
            return None                       # "* in a place of value: the not calculable quantity"
        if value == "" and name in ("beta_unc_keV",):
            return None                       # left blank after a '*' value
        if not _AME_DECIMAL.match(value):
            raise ExcerptError(f"{where}: field {name} must be a number, got {text!r}")
        return value
    return value


def read_ame(path):
    """The data lines of an AME2020 mass_1.mas20 excerpt.  Returns a list of
    dicts, one per data line, with the fields of AME_FIELDS (strings, ints)
    plus: line (its number), mass_micro_u (the atomic mass as one micro-u
    decimal string, e.g. "86909180.529"), uncertainty_micro_u, estimated
    (True when AME marks the mass or its uncertainty with '#')."""
    lines = _read_lines(path)
    fmt = None
    first_data = None
    for i, line in enumerate(lines):
        if fmt is None and line.strip().startswith("format"):
            fmt = line.split(":", 1)[1].strip() if ":" in line else ""
        if line.startswith("1N-Z"):
            first_data = i + 2            # the heading, then its units line
            break
    if fmt is None:
        raise ExcerptError(f"{path}: no 'format :' line in the header")
    if first_data is None:
        raise ExcerptError(f"{path}: no '1N-Z ...' column heading")
    columns, blanks = fortran_columns(fmt)
    if [c[0] for c in columns] != list("aiiiiaaffffaffiff") or len(columns) != len(AME_FIELDS) or not blanks:
        raise ExcerptError(f"{path}: header format {fmt!r} is not the AME2020 mass_1.mas20 layout")
    width = columns[-1][2]
    if first_data > len(lines) or "micro-u" not in lines[first_data - 1]:
        raise ExcerptError(f"{path}: the heading is not followed by its units line '(micro-u)'")
    rows = []
    for number in range(first_data + 1, len(lines) + 1):
        line = lines[number - 1]
        where = f"{path}:{number}"
        if len(line) > width:
            raise ExcerptError(f"{where}: {len(line)} characters, wider than the format's {width}: {line!r}")
        padded = line.ljust(width)
        for pos in blanks:
            if padded[pos] != " ":
                raise ExcerptError(f"{where}: column {pos + 1} must be blank (an 'x' of the format), "
                                   f"got {padded[pos]!r} in {line!r}")
        row = {"line": number}
        for name, (kind, first, end) in zip(AME_FIELDS, columns):
            row[name] = _ame_field(where, name, padded[first:end], kind)
        if row["cc"] not in ("", "0", "1"):
            raise ExcerptError(f"{where}: control character must be blank, 0 or 1, got {row['cc']!r}")
        if row["n"] - row["z"] != row["n_minus_z"] or row["n"] + row["z"] != row["a"]:
            raise ExcerptError(f"{where}: N-Z={row['n_minus_z']}, N={row['n']}, Z={row['z']}, "
                               f"A={row['a']} do not agree")
        if not _ELEMENT.match(row["element"]):
            raise ExcerptError(f"{where}: element symbol {row['element']!r} is not one or two letters")
        if row["beta_kind"] != "B-":
            raise ExcerptError(f"{where}: expected 'B-' before the beta-decay energy, got {row['beta_kind']!r}")
        fraction = row["mass_micro_u_fraction"]
        if not _AME_FRACTION.match(fraction):
            raise ExcerptError(f"{where}: atomic mass fraction {fraction!r} is not six micro-u digits, "
                               f"a point and decimals")
        if row["mass_u_integer"] < 1:
            raise ExcerptError(f"{where}: atomic mass integer part {row['mass_u_integer']} is below 1 u")
        unc = row["mass_unc_micro_u"]
        if unc.startswith("-"):
            raise ExcerptError(f"{where}: negative mass uncertainty {unc!r}")
        row["estimated"] = "#" in fraction or "#" in unc
        # '#' stands where the point would be; "030775#" reads as 030775.
        row["mass_micro_u"] = (str(row["mass_u_integer"]) + fraction.replace("#", ".")).rstrip(".")
        row["uncertainty_micro_u"] = unc.replace("#", ".").rstrip(".")
        key = (row["z"], row["a"])
        if any((r["z"], r["a"]) == key for r in rows):
            raise ExcerptError(f"{where}: Z={key[0]} A={key[1]} listed twice")
        rows.append(row)
    if not rows:
        raise ExcerptError(f"{path}: no data lines after the heading")
    return rows


def decimal_of(text):
    """decimal.Decimal of a decimal string (with '#' read as the point)."""
    try:
        return decimal.Decimal(text.replace("#", "."))
    except decimal.InvalidOperation:
        raise ExcerptError(f"not a decimal number: {text!r}") from None


def ulp_of(text):
    """One unit in the last written place of a decimal string: "0.0063" -> 1e-4."""
    text = text.replace("#", ".")
    if "." not in text:
        return decimal.Decimal(1)
    return decimal.Decimal(1).scaleb(-len(text.split(".", 1)[1]))


# ---------------------------------------------------------------------------
# CODATA 2018 allascii.txt
# ---------------------------------------------------------------------------

# Columns of allascii.txt: quantity 1-60, value 61-85, uncertainty 86-110,
# unit from 111 (the header's "Quantity ... Value ... Uncertainty ... Unit").
_CODATA_NAME, _CODATA_VALUE, _CODATA_UNC = (0, 60), (60, 85), (85, 110)
_CODATA_NUMBER = re.compile(r"^(-?\d+(?:\.\d+)?)(\.\.\.)?(?:e(-?\d+))?$")


def _codata_number(where, text):
    compact = text.replace(" ", "")
    m = _CODATA_NUMBER.match(compact)
    if not m:
        raise ExcerptError(f"{where}: {text.strip()!r} is not a CODATA number")
    mantissa, dots, exponent = m.groups()
    digits = mantissa + ("e" + exponent if exponent else "")
    return digits, bool(dots)


def read_codata(path):
    """The rows of a CODATA allascii.txt excerpt, keyed by quantity name.
    Each row: value (decimal string as listed, spaces removed, e.g.
    "1.66053906660e-27"), truncated (the listing ends in "...": an exact value
    cut after the digits shown), exact, uncertainty (decimal string, "0" when
    exact), unit, line."""
    lines = _read_lines(path)
    start = None
    for i, line in enumerate(lines):
        if line.startswith("-----") and set(line.strip()) == {"-"}:
            start = i + 1
            break
    if start is None:
        raise ExcerptError(f"{path}: no '-----' rule under the column heading")
    rows = {}
    for number in range(start + 1, len(lines) + 1):
        line = lines[number - 1]
        where = f"{path}:{number}"
        if len(line) < _CODATA_UNC[1] or line[_CODATA_VALUE[0] - 1] != " " or line[_CODATA_UNC[0] - 1] != " ":
            raise ExcerptError(f"{where}: not a quantity/value/uncertainty row: {line!r}")
        name = line[slice(*_CODATA_NAME)].strip()
        if not name:
            raise ExcerptError(f"{where}: empty quantity name")
        value, truncated = _codata_number(where, line[slice(*_CODATA_VALUE)])
        unc_text = line[slice(*_CODATA_UNC)].strip()
        exact = unc_text == "(exact)"
        if exact:
            uncertainty = "0"
        else:
            uncertainty, unc_dots = _codata_number(where, unc_text)
            if unc_dots or truncated:
                raise ExcerptError(f"{where}: only exact values may be truncated with '...'")
            if uncertainty.startswith("-"):
                raise ExcerptError(f"{where}: negative uncertainty {unc_text!r}")
        if name in rows:
            raise ExcerptError(f"{where}: quantity {name!r} listed twice")
        rows[name] = {"value": value, "truncated": truncated, "exact": exact, "uncertainty": uncertainty,
                      "unit": line[_CODATA_UNC[1]:].strip(), "line": number}
    if not rows:
        raise ExcerptError(f"{path}: no rows under the heading")
    return rows
