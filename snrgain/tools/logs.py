"""Reading decode logs and spot lists, and pairing the decodes two antennas heard.

Formats read (each documented with an example in :mod:`snrgain.tools.verify`'s ``EXAMPLES``):

1. **The common ALL-decodes text format** that weak-signal decoders append to, one line per decode, fields
   separated by spaces::

       YYMMDD_HHMMSS  FREQ  [Rx|Tx]  MODE  SNR  DT  AUDIO  MESSAGE...
       YYYY-MM-DD HH:MM:SS  FREQ  [Rx|Tx]  MODE  SNR  DT  AUDIO  MESSAGE...

   the UTC date and time of the slot's start (``T`` may join date and time, and a ``Z`` may end it); FREQ the
   dial frequency in MHz (``1.840``) or a band name (``160m``); ``Rx`` or ``Tx`` (optional; ``Tx`` lines are the
   station's own transmissions and are skipped); MODE the digital mode (see :data:`SLOT_SECONDS`); SNR the
   decoder's signal-to-noise ratio [dB, integer]; DT the time offset [s]; AUDIO the audio offset [Hz]; MESSAGE the
   rest of the line.  A trailing decoder mark (``?``, ``a1`` ... ``a9``) and a leading ``~`` are not part of the
   message.  Blank lines and lines starting with ``#`` are skipped.
2. **A plain CSV of the same fields**: a header naming ``time_utc`` (ISO 8601), ``band`` or ``frequency_mhz``,
   ``mode``, ``snr_db``, ``dt_s``, ``audio_hz``, ``message`` (any order; other columns ignored).
3. **A reporting-network spot CSV**: one listener's reports of transmitters, the listener switching between the
   two antennas from one slot to the next.  Header: ``time_utc``, ``band`` or ``frequency_mhz``, ``snr_db``,
   ``tx_call``; optional ``tx_locator``, ``rx_call``, ``mode`` (default WSPR) and ``antenna`` (``a`` or ``b``;
   without it the slot number decides, see :func:`pair_spots`).

Every line that is not used is counted under a named reason with its line number (:class:`Problems`); nothing
in a log raises.
"""

from __future__ import annotations

import contextlib
import csv
import functools
import gc
import io
import re
from dataclasses import field
from pathlib import Path

import numpy as np
import pandas as pd

from snrgain.files import InputFileError  # re-exported: what read_text raises
from snrgain.records import record
from snrgain.tools.locator import LOCATOR_SHAPE, is_locator

MAX_LOG_BYTES = 200_000_000
"""The largest log read [bytes] (about 2 million decode lines)."""

SLOT_SECONDS = {"FT8": 15.0, "FT4": 7.5, "JT65": 60.0, "JT9": 60.0, "Q65": 60.0, "FST4": 60.0, "WSPR": 120.0}
"""The transmit period of each mode [s] (the modes' published defaults; Q65 and FST4 also run other periods: give
``slot_s`` for those)."""

BANDS_MHZ = {
    "160m": (1.8, 2.0),
    "80m": (3.5, 4.0),
    "60m": (5.25, 5.45),
    "40m": (7.0, 7.3),
    "30m": (10.1, 10.15),
    "20m": (14.0, 14.35),
}
"""The amateur bands a low-band listener uses, by their edges [MHz] (ITU Region 2 edges, the widest)."""

SNR_RANGE_DB = (-60.0, 60.0)
"""Decoder SNRs outside this range are not a decode's report [dB]."""

_DATE_COMPACT = re.compile(r"^\d{6}_\d{6}$")
_DATE_ISO = re.compile(r"^\d{4}-\d{2}-\d{2}$")
_TIME = re.compile(r"^\d{2}:\d{2}:\d{2}Z?$")
_DECODER_MARK = re.compile(r"^(?:\?|a\d)$")
_CALL = re.compile(r"^<?[A-Z0-9/]*[0-9][A-Z0-9/]*>?$")
_REPORT = re.compile(r"^R?[+-]\d{1,2}$")
SIGN_OFFS = {"RR73", "RRR", "73"}
"""Message ends that are not locators (RR73 has a locator's shape: it is read as a sign-off, the usual reading)."""


def band_of(freq_mhz: np.ndarray) -> np.ndarray:
    """Band names for frequencies [MHz]; outside every band, the frequency to 1 kHz (e.g. '1.234 MHz')."""
    f = np.asarray(freq_mhz, dtype=float)
    out = np.array([f"{x:.3f} MHz" for x in f], dtype=object) if f.size else np.array([], dtype=object)
    for name, (lo, hi) in BANDS_MHZ.items():
        out[(f >= lo) & (f <= hi)] = name
    return out


def band_of_hz(freq_hz: float) -> str:
    """The band name of one frequency [Hz]."""
    return str(band_of(np.array([freq_hz / 1e6]))[0])


@record(frozen=False)
class Problems:
    """Lines not used: reason -> list of (file label, line number)."""

    by_reason: dict[str, list[tuple[str, int]]] = field(default_factory=dict)

    def add(self, reason: str, label: str, lines) -> None:
        lines = [int(n) for n in np.atleast_1d(lines)]
        if lines:
            self.by_reason.setdefault(reason, []).extend((label, n) for n in lines)

    def count(self, reason: str | None = None) -> int:
        if reason is None:
            return sum(len(v) for v in self.by_reason.values())
        return len(self.by_reason.get(reason, []))

    def as_dict(self) -> dict:
        return {
            reason: {"count": len(v), "lines": [f"{label}:{n}" for label, n in sorted(v)]}
            for reason, v in sorted(self.by_reason.items())
        }

    def summary(self, *, show: int = 6) -> list[str]:
        """One line per reason: the count and the first line numbers."""
        out = []
        for reason, v in sorted(self.by_reason.items(), key=lambda kv: -len(kv[1])):
            first = ", ".join(f"{label}:{n}" for label, n in sorted(v)[:show])
            more = f" and {len(v) - show} more" if len(v) > show else ""
            out.append(f"{len(v):>7,}  {reason} ({first}{more})")
        return out


COLUMNS = ("line", "time", "band", "mode", "snr_db", "dt_s", "audio_hz", "message")


def read_text(path, what: str = "log") -> str:
    """A log's text (a regular file within :data:`MAX_LOG_BYTES`; a leading byte-order mark dropped); undecodable
    bytes become U+FFFD (the line then fails on its own, named); UTF-16 text is refused, named."""
    from snrgain.files import read_limited

    raw = read_limited(Path(path), limit_bytes=MAX_LOG_BYTES, what=what)
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
        raise InputFileError(f"{path}: the {what} is UTF-16 text; save it as UTF-8")
    return raw.decode("utf-8-sig", errors="replace")


@contextlib.contextmanager
def _collector_paused():
    """Python's cyclic garbage collector paused while a log's lines become tuples (no cycles are made; the
    collector's passes over a growing list of 100,000 tuples would take most of the time), then restored."""
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


def _slow_fields(n: int, raw: str, few: list, tx: list):
    """One line's fields (stamp, freq, mode, snr, dt, df, message), or None (blank, comment, Tx, too few)."""
    tok = raw.split()
    if not tok or tok[0].startswith("#"):
        return None
    if _DATE_ISO.match(tok[0]) and len(tok) > 1 and _TIME.match(tok[1]):
        stamp, rest = tok[0] + "T" + tok[1].rstrip("Z"), tok[2:]
    elif "T" in tok[0] and _DATE_ISO.match(tok[0].split("T")[0]):
        stamp, rest = tok[0].rstrip("Z"), tok[1:]
    else:
        stamp, rest = tok[0], tok[1:]
    if len(rest) > 1 and rest[1] in ("Rx", "Tx", "RX", "TX"):
        if rest[1].upper() == "TX":
            tx.append(n)
            return None
        rest = rest[:1] + rest[2:]
    while rest and _DECODER_MARK.match(rest[-1]):
        rest = rest[:-1]
    if len(rest) > 5 and rest[5] == "~":
        rest = rest[:5] + rest[6:]
    if len(rest) < 6:
        few.append(n)
        return None
    return (stamp, rest[0], rest[1], rest[2], rest[3], rest[4], " ".join(rest[5:]))


def _clean_message(msg: str) -> str:
    """A message with single spaces, in capitals, without a leading ``~`` or trailing decoder marks."""
    tok = msg.split()
    if tok and tok[0] == "~":
        tok = tok[1:]
    while tok and _DECODER_MARK.match(tok[-1]):
        tok = tok[:-1]
    return " ".join(tok).upper()


def parse_decode_text(text: str, label: str, problems: Problems) -> pd.DataFrame:
    """The decodes of a log in the common ALL-decodes text format, one row each (:data:`COLUMNS`); lines not read
    are counted in ``problems`` under ``label``.

    The usual line (a compact stamp, ``Rx``, one space between message words) is split once in C; any other line
    goes through the general reading, token by token."""
    rows, nums = [], []
    few, tx = [], []
    with _collector_paused():
        for n, raw in enumerate(text.splitlines(), start=1):
            p = raw.split(None, 7)
            if len(p) == 8 and p[2] == "Rx" and len(p[0]) == 13 and p[0][6] == "_":
                rows.append((p[0], p[1], p[3], p[4], p[5], p[6], p[7]))
                nums.append(n)
                continue
            f = _slow_fields(n, raw, few, tx)
            if f is not None:
                rows.append(f)
                nums.append(n)
        cols = np.array(rows, dtype=object).reshape(-1, 7)
        del rows
    problems.add("too few fields (date time, frequency, mode, SNR, DT, audio offset, message)", label, few)
    problems.add("the station's own transmission (Tx), not a decode", label, tx)
    # A log holds one stamp per slot: parse the distinct stamps only.
    codes, stamps = pd.factorize(pd.Series(cols[:, 0], dtype=object))
    stamps = pd.Series(np.asarray(stamps, dtype=object), dtype=object)
    compact = stamps.str.len().eq(13).to_numpy() & (stamps.str[6] == "_").to_numpy()
    t1 = pd.to_datetime(stamps[compact], format="%y%m%d_%H%M%S", errors="coerce")
    t2 = pd.to_datetime(stamps[~compact], format="%Y-%m-%dT%H:%M:%S", errors="coerce")
    when = np.empty(len(stamps), dtype="datetime64[ns]")
    when[compact] = t1.to_numpy("datetime64[ns]")
    when[~compact] = t2.to_numpy("datetime64[ns]")
    time = when[codes]
    raw = {
        "line": np.asarray(nums, dtype=np.int64),
        "time": time,
        "freq": cols[:, 1],
        "mode": cols[:, 2],
        "snr": cols[:, 3],
        "dt": cols[:, 4],
        "df": cols[:, 5],
        "message": cols[:, 6],
    }
    return _finish(raw, label, problems)


def _numbers(col) -> np.ndarray:
    """Floats from strings; NaN where a string is not a number."""
    a = np.asarray(col, dtype=object)
    try:
        out = a.astype(np.float64)
    except (ValueError, TypeError):
        out = pd.to_numeric(pd.Series(a, dtype=object), errors="coerce").to_numpy(np.float64, na_value=np.nan)
    return out


def _frequency_band(freq) -> tuple[np.ndarray, np.ndarray]:
    """(band name, bad mask) from a column of MHz numbers or band names."""
    freq = np.asarray(freq, dtype=object)
    f = _numbers(freq)
    is_name = np.isnan(f)
    if is_name.any():
        named = np.array([str(x).strip().lower() for x in freq[is_name]], dtype=object)
        ok = np.isin(named, list(BANDS_MHZ))
    band = band_of(np.where(is_name, -1.0, f))
    bad = ~((f > 0.0) & (f < 1e5))
    if is_name.any():
        idx = np.flatnonzero(is_name)
        band[idx[ok]] = named[ok]
        bad[idx[ok]] = False
    return band, bad


def per_distinct(values, fn) -> np.ndarray:
    """``fn`` of each value, computed once per distinct value (a log repeats its messages and stamps)."""
    values = np.asarray(values, dtype=object)
    if not values.size:
        return values
    codes, uniq = pd.factorize(pd.Series(values, dtype=object))
    out = np.empty(len(uniq), dtype=object)
    out[:] = [fn(u) for u in np.asarray(uniq, dtype=object)]
    return out[codes]


def _finish(raw: dict, label: str, problems: Problems) -> pd.DataFrame:
    """Columns checked and converted together; each bad row named under its first bad field."""
    band, bad_freq = _frequency_band(raw["freq"])
    mode = per_distinct(raw["mode"], lambda m: str(m).strip().upper())
    snr, dt, df = _numbers(raw["snr"]), _numbers(raw["dt"]), _numbers(raw["df"])
    message = np.asarray(raw["message"], dtype=object)
    message = per_distinct(message, _clean_message)
    with np.errstate(invalid="ignore"):
        checks = [
            ("date and time not a UTC date and time (YYMMDD_HHMMSS or YYYY-MM-DD HH:MM:SS)", np.isnat(raw["time"])),
            ("frequency not a number in MHz or a band name (e.g. 1.840 or 160m)", bad_freq),
            (f"mode not one of {', '.join(SLOT_SECONDS)}", ~np.isin(mode, list(SLOT_SECONDS))),
            ("SNR not a number of dB", np.isnan(snr)),
            (
                f"SNR outside {SNR_RANGE_DB[0]:g} to {SNR_RANGE_DB[1]:+g} dB",
                (snr < SNR_RANGE_DB[0]) | (snr > SNR_RANGE_DB[1]),
            ),
            ("time offset (DT) not a number of seconds", ~(np.abs(dt) <= 60.0)),
            ("audio offset not a number of Hz from 0 to 6000", ~((df >= 0.0) & (df <= 6000.0))),
            ("empty message", np.array([len(m) == 0 for m in message], dtype=bool).reshape(-1)),
        ]
    bad = np.zeros(len(raw["line"]), dtype=bool)
    for reason, mask in checks:
        mask = np.asarray(mask, dtype=bool) & ~bad
        problems.add(reason, label, raw["line"][mask])
        bad |= mask
    g = ~bad
    return pd.DataFrame(
        {
            "line": raw["line"][g],
            "time": np.asarray(raw["time"])[g],
            "band": pd.Series(band[g], dtype=object),
            "mode": pd.Series(mode[g], dtype=object),
            "snr_db": snr[g],
            "dt_s": dt[g],
            "audio_hz": df[g],
            "message": pd.Series(message[g], dtype=object),
        }
    )


def _csv_frame(text: str, label: str, required: dict[str, tuple[str, ...]]) -> pd.DataFrame:
    """A CSV's rows as strings with a 'line' column; ValueError naming the file and the missing column."""
    reader = csv.reader(io.StringIO(text))
    rows = []
    header = None
    for row in reader:
        n = reader.line_num
        if not row or (row[0].lstrip().startswith("#")):
            continue
        if header is None:
            header = [h.strip().lower() for h in row]
            twice = sorted({h for h in header if header.count(h) > 1})
            if twice:
                raise ValueError(
                    f"{label}: line {n}: the header names {', '.join(repr(h) for h in twice)} more than once; "
                    "each column once"
                )
            continue
        rows.append([n, *row[: len(header)], *([""] * (len(header) - len(row)))])
    if header is None:
        raise ValueError(f"{label}: no header line (see --example)")
    for what, alternatives in required.items():
        if not any(a in header for a in alternatives):
            raise ValueError(f"{label}: no column {' or '.join(alternatives)} ({what}); the header is {header}")
    return pd.DataFrame(rows, columns=["line", *header]).astype({"line": np.int64})


def parse_decode_csv(text: str, label: str, problems: Problems) -> pd.DataFrame:
    """The decodes of a plain CSV (format 2 of the module's list)."""
    need = {
        "time": ("time_utc",),
        "frequency": ("band", "frequency_mhz"),
        "mode": ("mode",),
        "SNR": ("snr_db",),
        "time offset": ("dt_s",),
        "audio offset": ("audio_hz",),
        "message": ("message",),
    }
    raw = _csv_frame(text, label, need)
    cols = {
        "line": raw["line"].to_numpy(np.int64),
        "time": _iso_times(raw["time_utc"]).to_numpy("datetime64[ns]"),
        "freq": (raw["band"] if "band" in raw else raw["frequency_mhz"]).to_numpy(object),
        "mode": raw["mode"].to_numpy(object),
        "snr": raw["snr_db"].to_numpy(object),
        "dt": raw["dt_s"].to_numpy(object),
        "df": raw["audio_hz"].to_numpy(object),
        "message": raw["message"].to_numpy(object),
    }
    return _finish(cols, label, problems)


def _iso_times(col: pd.Series) -> pd.Series:
    s = col.astype(str).str.strip().str.replace(" ", "T", regex=False).str.rstrip("Z")
    return pd.to_datetime(s, format="%Y-%m-%dT%H:%M:%S", errors="coerce")


def looks_like_csv(text: str) -> bool:
    """True when the first line that is not blank or a comment is a CSV header naming time_utc."""
    for line in text.splitlines():
        s = line.strip()
        if s and not s.startswith("#"):
            return "time_utc" in s.lower() and "," in s
    return False


_LOG_HINT = "give the decoder's ALL-decodes text log or a CSV of its decodes (snrgain verify --example log, or csv)"


def read_decodes(path, label: str, problems: Problems) -> pd.DataFrame:
    """A decode log or CSV (told apart by its first line); ValueError naming the file for one that is not text, is
    empty (or blank lines and comments alone), or has lines and not one decode among them (a wrong file given: its
    lines' reasons alone would pass unseen)."""
    text = read_text(path)
    nul, bad = text.find("\0"), text.count("\ufffd")
    if nul >= 0 or bad > 0.1 * len(text):  # a few bad bytes fail their own lines; this many are no text log
        what = (
            f"a NUL byte at character {nul + 1}" if nul >= 0 else f"{bad:,} of its {len(text):,} characters not UTF-8"
        )
        raise ValueError(f"{path} (log {label}): not a text log ({what}); {_LOG_HINT}")
    try:
        parse = parse_decode_csv if looks_like_csv(text) else parse_decode_text
        df = parse(text, label, problems)
    except ValueError as exc:
        raise ValueError(f"{path} (log {label}): {str(exc).removeprefix(label + ': ')}") from None
    if df.empty:
        lines = sum(1 for s in text.splitlines() if s.strip() and not s.lstrip().startswith("#"))
        if not lines:  # nothing to pair: else "0 pairs" would blame the other log's decodes as unpaired
            what = "empty" if not text else "only blank lines" if not text.strip() else "only blank lines and comments"
            raise ValueError(f"{path} (log {label}): {what}, not one decode; {_LOG_HINT}")
        why = [r for r, v in problems.by_reason.items() if any(lbl == label for lbl, _ in v)]
        because = f" ({'; '.join(why[:3])})" if why else ""
        raise ValueError(f"{path} (log {label}): none of its {lines:,} lines reads as a decode{because}; {_LOG_HINT}")
    return df


def slots(df: pd.DataFrame, slot_s: float | None = None) -> np.ndarray:
    """Each decode's slot number: its start time over the mode's period, rounded (a start written a fraction of a
    second late or truncated, as 7.5 s periods are, still lands in its slot)."""
    seconds = (df["time"].to_numpy("datetime64[ms]").astype(np.int64)) / 1e3
    period = (
        np.full(len(df), float(slot_s)) if slot_s else df["mode"].map(SLOT_SECONDS).to_numpy(float, na_value=np.nan)
    )
    return np.round(seconds / period).astype(np.int64)


# ---- messages: who sent it, and from where


@record
class Sender:
    call: str | None
    locator: str | None
    bad_locator: str | None = None


@functools.lru_cache(maxsize=2**18)
def sender_of(message: str) -> Sender:
    """The sending station of a standard message and the locator it gives, if any.

    ``CQ [modifier] CALL [LOCATOR]``: CALL sent it.  ``TO FROM [LOCATOR | report | RRR | RR73 | 73]``: FROM sent
    it.  Angle brackets (a shortened call) are removed.  A locator-shaped word that is not a locator (``ZZ99``) is
    returned as ``bad_locator``.

    >>> sender_of("CQ Q1ABC FN42")
    Sender(call='Q1ABC', locator='FN42', bad_locator=None)
    >>> sender_of("Q2XYZ Q1ABC R-07")
    Sender(call='Q1ABC', locator=None, bad_locator=None)
    """
    tok = message.split()
    if not tok:
        return Sender(None, None)
    loc = bad = None
    last = tok[-1]
    if last not in SIGN_OFFS and LOCATOR_SHAPE.match(last) and len(last) in (4, 6):
        if is_locator(last):
            loc = last[:2].upper() + last[2:4] + last[4:].lower()
        else:
            bad = last
        tok = tok[:-1]
    elif last in SIGN_OFFS or _REPORT.match(last):
        tok = tok[:-1]
    if tok and tok[0] == "CQ":
        call = tok[-1] if len(tok) >= 2 else None
    elif len(tok) == 2:
        call = tok[1]
    else:
        call = None
    if call is not None:
        call = call.strip("<>")
        if not _CALL.match(call) or not re.search("[A-Z]", call):
            call = None
    return Sender(call, loc if call else None, bad)


# ---- pairing


KEY = ["band", "mode", "slot", "message"]


@record
class Pairs:
    """Decodes paired between antenna A and antenna B (one row per pair) and the lines not paired (counted)."""

    table: pd.DataFrame
    """Columns: time (A's), band, mode, message, snr_a_db, snr_b_db, diff_db (A - B), audio_a_hz, audio_b_hz,
    line_a, line_b."""
    rule: str


def pair_decodes(a: pd.DataFrame, b: pd.DataFrame, problems: Problems, *, max_hz: float = 5.0, slot_s=None) -> Pairs:
    """Pair the decodes of the same message, band and mode in the same slot whose audio offsets differ by at most
    ``max_hz``; each decode is used once.  A message decoded twice in one slot by one log keeps its first line
    (the others are counted).  Vectorised: one merge on the key."""
    frames = []
    for df, label in ((a, "A"), (b, "B")):
        df = df.assign(slot=slots(df, slot_s))
        dup = df.duplicated(KEY, keep="first")
        problems.add("the same message twice in one slot (the first kept)", label, df["line"][dup])
        frames.append(df[~dup])
    a, b = frames
    # One int64 key per (band, mode, message) code and slot: a merge on one integer column.
    both_keys = pd.concat([a[["band", "mode", "message"]], b[["band", "mode", "message"]]], ignore_index=True)
    slot = np.concatenate([a["slot"].to_numpy(np.int64), b["slot"].to_numpy(np.int64)])
    parts = [pd.factorize(both_keys[c].to_numpy(object))[0].astype(np.int64) for c in ("band", "mode", "message")]
    code = (parts[2] * (parts[1].max(initial=0) + 1) + parts[1]) * (parts[0].max(initial=0) + 1) + parts[0]
    span = int(slot.max() - slot.min()) + 1 if slot.size else 1
    if float(code.max(initial=0) + 1) * span < 2.0**62:
        key = code * span + (slot - slot.min(initial=0))
    else:  # an enormous span of time: number the distinct (code, slot) pairs instead
        key = np.unique(np.stack([code, slot]), axis=1, return_inverse=True)[1].reshape(-1)
    a = a.assign(key=key[: len(a)])
    b = b.assign(key=key[len(a) :]).drop(columns=["band", "mode", "message", "slot"])
    m = a.merge(b, on="key", how="outer", suffixes=("_a", "_b"), indicator=True)
    only_a = m["_merge"] == "left_only"
    only_b = m["_merge"] == "right_only"
    both = m["_merge"] == "both"
    far = both & ((m["audio_hz_a"] - m["audio_hz_b"]).abs() > max_hz)
    for label, mask, col in (("A", only_a, "line_a"), ("B", only_b, "line_b")):
        problems.add("unpaired: the other antenna has no decode of this message in this slot", label, m[col][mask])
    for label, col in (("A", "line_a"), ("B", "line_b")):
        problems.add(
            f"unpaired: the same message's audio offsets differ by more than {max_hz:g} Hz", label, m[col][far]
        )
    p = m[both & ~far]
    table = pd.DataFrame(
        {
            "time": p["time_a"].to_numpy(),
            "band": p["band"].to_numpy(object),
            "mode": p["mode"].to_numpy(object),
            "message": p["message"].to_numpy(object),
            "snr_a_db": p["snr_db_a"].to_numpy(float),
            "snr_b_db": p["snr_db_b"].to_numpy(float),
            "audio_a_hz": p["audio_hz_a"].to_numpy(float),
            "audio_b_hz": p["audio_hz_b"].to_numpy(float),
            "line_a": p["line_a"].to_numpy(np.int64),
            "line_b": p["line_b"].to_numpy(np.int64),
        }
    )
    table["diff_db"] = table["snr_a_db"] - table["snr_b_db"]
    rule = (
        f"same band, mode and message in the same slot, audio offsets within {max_hz:g} Hz; "
        "each decode used once; SNR difference = A - B"
    )
    return Pairs(table.sort_values("time", kind="stable").reset_index(drop=True), rule)


def parse_spots_csv(text: str, label: str, problems: Problems) -> pd.DataFrame:
    """A reporting network's spots (format 3): time, band, mode, snr_db, tx_call, tx_locator, rx_call, antenna."""
    need = {"time": ("time_utc",), "frequency": ("band", "frequency_mhz"), "SNR": ("snr_db",), "call": ("tx_call",)}
    raw = _csv_frame(text, label, need)
    raw["time"] = _iso_times(raw["time_utc"])
    freq = raw["band"] if "band" in raw else raw["frequency_mhz"]
    band, bad_freq = _frequency_band(freq.to_numpy(object))
    band, bad_freq = pd.Series(band, index=raw.index, dtype=object), pd.Series(bad_freq, index=raw.index)
    mode = raw["mode"].astype(str).str.strip().str.upper() if "mode" in raw else pd.Series("WSPR", index=raw.index)
    snr = pd.to_numeric(raw["snr_db"], errors="coerce")
    call = raw["tx_call"].astype(str).str.strip().str.upper()
    antenna = raw["antenna"].astype(str).str.strip().str.lower() if "antenna" in raw else None
    checks = [
        ("time_utc not an ISO 8601 UTC time (YYYY-MM-DD HH:MM:SS)", raw["time"].isna()),
        ("frequency not a number in MHz or a band name", bad_freq),
        (f"mode not one of {', '.join(SLOT_SECONDS)}", ~mode.isin(list(SLOT_SECONDS))),
        ("SNR not a number of dB", snr.isna()),
        (f"SNR outside {SNR_RANGE_DB[0]:g} to {SNR_RANGE_DB[1]:+g} dB", ~snr.between(*SNR_RANGE_DB) & snr.notna()),
        ("tx_call empty", call.str.len() == 0),
    ]
    if antenna is not None:
        checks.append(("antenna not a or b", ~antenna.isin(["a", "b"])))
    bad = pd.Series(False, index=raw.index)
    for reason, mask in checks:
        mask = mask.fillna(True).astype(bool) & ~bad
        problems.add(reason, label, raw["line"][mask])
        bad |= mask
    g = ~bad
    out = pd.DataFrame(
        {
            "line": raw["line"][g].to_numpy(np.int64),
            "time": raw["time"][g].to_numpy("datetime64[ns]"),
            "band": band[g].to_numpy(object),
            "mode": mode[g].to_numpy(object),
            "snr_db": snr[g].to_numpy(float),
            "tx_call": call[g].to_numpy(object),
            "tx_locator": (raw["tx_locator"] if "tx_locator" in raw else pd.Series("", index=raw.index))[g]
            .astype(str)
            .str.strip()
            .to_numpy(object),
            "rx_call": (raw["rx_call"] if "rx_call" in raw else pd.Series("", index=raw.index))[g]
            .astype(str)
            .str.strip()
            .str.upper()
            .to_numpy(object),
        }
    )
    if antenna is not None:
        out["antenna"] = antenna[g].to_numpy(object)
    return out


def pair_spots(spots: pd.DataFrame, problems: Problems, *, a_slots: str = "even", listener: str | None = None) -> Pairs:
    """Pair one listener's spots of one transmitter heard on two antennas in alternating slots.

    The rule: slots are numbered from 1970-01-01 00:00 UTC in the mode's period (for WSPR, 2 minutes: the
    even minutes).  Without an ``antenna`` column, slots of the ``a_slots`` parity ('even' or 'odd') were heard
    on antenna A and the others on B.  A spot in an A slot pairs with the same transmitter's spot, on the same
    band, in the next slot (B); each spot is used once; the pair's time is the A slot's.  With an ``antenna``
    column, the same rule holds with 'next slot' read as the next slot whose spot came from antenna B.  The two
    spots of a pair are one period apart: fading in between adds to the spread (the statistics count it).
    """
    label = "spots"
    if a_slots not in ("even", "odd"):
        raise ValueError(f"a_slots: 'even' or 'odd'; got {a_slots!r}")
    listeners = sorted(set(spots["rx_call"]) - {""})
    if listener is not None:
        other = spots["rx_call"] != listener.upper()
        problems.add(f"another listener than {listener.upper()}", label, spots["line"][other])
        spots = spots[~other]
    elif len(listeners) > 1:
        raise ValueError(
            f"{label}: spots from {len(listeners)} listeners ({', '.join(listeners[:5])}); name one with --listener"
        )
    s = spots.assign(slot=slots(spots))
    if "antenna" in s:
        is_a = (s["antenna"] == "a").to_numpy()
    else:
        is_a = (s["slot"] % 2 == (0 if a_slots == "even" else 1)).to_numpy()
    s = s.assign(side=np.where(is_a, "a", "b"), pair_slot=np.where(is_a, s["slot"], s["slot"] - 1))
    key = ["band", "mode", "tx_call", "pair_slot"]
    dup = s.duplicated([*key, "side"], keep="first")
    problems.add("the same transmitter twice in one slot (the first kept)", label, s["line"][dup])
    s = s[~dup]
    a, b = s[s["side"] == "a"], s[s["side"] == "b"]
    m = a.merge(b, on=key, how="outer", suffixes=("_a", "_b"), indicator=True)
    for side in ("a", "b"):
        lone = m["_merge"] == ("left_only" if side == "a" else "right_only")
        problems.add(
            f"unpaired: no spot of this transmitter in the {'next' if side == 'a' else 'previous'} slot",
            label,
            m[f"line_{side}"][lone],
        )
    p = m[m["_merge"] == "both"]
    loc = p["tx_locator_a"].where(p["tx_locator_a"].astype(str).str.len() > 0, p["tx_locator_b"]).astype(str)
    table = pd.DataFrame(
        {
            "time": p["time_a"].to_numpy(),
            "band": p["band"].to_numpy(object),
            "mode": p["mode"].to_numpy(object),
            "message": ("CQ " + p["tx_call"] + " " + loc).str.strip().to_numpy(object),
            "snr_a_db": p["snr_db_a"].to_numpy(float),
            "snr_b_db": p["snr_db_b"].to_numpy(float),
            "audio_a_hz": np.full(len(p), np.nan),
            "audio_b_hz": np.full(len(p), np.nan),
            "line_a": p["line_a"].to_numpy(np.int64),
            "line_b": p["line_b"].to_numpy(np.int64),
        }
    )
    table["diff_db"] = table["snr_a_db"] - table["snr_b_db"]
    side_rule = "the antenna column" if "antenna" in s else f"{a_slots} slots on antenna A, the others on B"
    rule = (
        f"one listener, one transmitter, same band: {side_rule}; an A slot pairs with the next slot's spot "
        "(B); each spot used once; SNR difference = A - B"
    )
    return Pairs(table.sort_values("time", kind="stable").reset_index(drop=True), rule)
