"""The checkpoint frame: how a tinygeo object (a Column, a Station) survives a
power cut as a blob of bytes.

This module knows no class: each class declares its own layout (the names of
the fields it saves) and calls ``pack`` / ``unpack`` / ``check_values``
from its ``to_bytes`` / ``from_bytes``, importing this module only then (a
logger that never checkpoints never loads it). So every blob has the same
frame, the same CRC and the same refusal rules.

Frame (little-endian, no padding)::

    magic     4 bytes      which class wrote it (b"TGCK" column, ...)
    version   1 byte       the layout's version
    length    uint16       payload length, bytes
    payload   doubles ('<d', IEEE 754 binary64) then int32s ('<i')
    crc       uint32       CRC-32 of everything before it

Floats are stored as doubles, so a float32 board stores its values exactly
and a restore continues bit-identically on the same platform. The CRC is
CRC-32 of IEEE 802.3 (reflected polynomial 0xEDB88320, as zlib and
binascii.crc32; ``binascii.crc32`` where the firmware has it, else the same
CRC computed here four bits at a time): it detects every single-bit error and
every burst of up to 32 bits; truncation is caught by the length.
``unpack`` refuses (CheckpointError, nothing restored) a blob that is not
bytes, is truncated or too long, has another magic or version, or fails the
CRC; ``check_values`` refuses restored values outside what the class can
hold (an inf, a nan where a value must be, a value out of its range).
"""
import struct

from .errors import CheckpointError, quote

try:
    from binascii import crc32 as _crc32
except ImportError:  # pragma: no cover - firmware without binascii.crc32
    _crc32 = None  # type: ignore

HEAD = "<4sBH"
"""magic, version, payload length (7 bytes)."""
HEAD_LEN = 7
CRC_LEN = 4


def crc32(data, crc=0):
    """CRC-32 (IEEE 802.3) of ``data`` (bytes), continuing from ``crc``."""
    if _crc32 is not None:
        return _crc32(data, crc) & 0xFFFFFFFF
    return crc32_soft(data, crc)


_NIBBLE = None


def crc32_soft(data, crc=0):
    """The same CRC-32 without binascii: four bits at a time with a 16-entry
    table (built on first use)."""
    global _NIBBLE
    t = _NIBBLE
    if t is None:
        out = []
        for i in range(16):
            c = i
            for _ in range(4):
                c = (c >> 1) ^ (0xEDB88320 if c & 1 else 0)
            out.append(c)
        t = _NIBBLE = tuple(out)
    c = crc ^ 0xFFFFFFFF
    for b in data:
        c = t[(c ^ b) & 15] ^ (c >> 4)
        c = t[(c ^ (b >> 4)) & 15] ^ (c >> 4)
    return c ^ 0xFFFFFFFF


def size(n_floats, n_ints):
    """Length of a blob holding ``n_floats`` doubles and ``n_ints`` int32s, bytes."""
    return HEAD_LEN + 8 * n_floats + 4 * n_ints + CRC_LEN


def pack(magic, version, floats, ints):
    """The blob (bytes) of ``floats`` (a list of floats) and ``ints`` (a list
    of ints, each within int32) under ``magic`` (4 bytes) and ``version``."""
    fmt = "<%dd%di" % (len(floats), len(ints))
    body = struct.pack(HEAD, magic, version, struct.calcsize(fmt))
    body += struct.pack(fmt, *(floats + ints))
    return body + struct.pack("<I", crc32(body))


def unpack(blob, magic, version, n_floats, n_ints, what):
    """The (floats, ints) lists of a blob written by ``pack`` with this magic,
    version and counts; CheckpointError (naming ``what``) otherwise."""
    # bytes-like only: bytes(n) of an int would build n zero bytes
    try:
        if isinstance(blob, (int, str)):
            raise TypeError
        blob = bytes(blob)
    except (TypeError, ValueError):
        raise CheckpointError("%s checkpoint is %s, not bytes; pass what to_bytes() returned"
                              % (what, quote(blob)))
    n = len(blob)
    want = size(n_floats, n_ints)
    if n < HEAD_LEN + CRC_LEN:
        raise CheckpointError("%s checkpoint of %d bytes is too short (a blob has %d); truncated?"
                              % (what, n, want))
    m, v, length = struct.unpack(HEAD, blob[:HEAD_LEN])
    if m != magic:
        raise CheckpointError("not a tinygeo %s checkpoint (magic %r, expected %r)"
                              % (what, m, magic))
    if v != version:
        raise CheckpointError("%s checkpoint version %d, this tinygeo reads version %d; start "
                              "afresh or use the tinygeo that wrote it" % (what, v, version))
    if n != want or length != want - HEAD_LEN - CRC_LEN:
        raise CheckpointError("%s checkpoint of %d bytes (payload %d), expected %d (payload %d); "
                              "truncated or corrupted" % (what, n, length, want,
                                                          want - HEAD_LEN - CRC_LEN))
    body = blob[:n - CRC_LEN]
    (crc,) = struct.unpack("<I", blob[n - CRC_LEN:])
    got = crc32(body)
    if crc != got:
        raise CheckpointError("%s checkpoint CRC-32 mismatch (stored %08x, computed %08x): "
                              "corrupted; use an older checkpoint" % (what, crc, got))
    vals = struct.unpack("<%dd%di" % (n_floats, n_ints), body[HEAD_LEN:])
    return list(vals[:n_floats]), list(vals[n_floats:])


def check_values(obj, spec, what):
    """Refuse (CheckpointError) restored attribute values of ``obj`` that its
    class cannot hold.

    ``spec``: text of ``;``-separated entries ``name lo hi`` or
    ``name lo hi n``: attribute ``name`` must be a number within lo..hi
    (``*`` for no bound), or nan (or None) where the entry ends in ``n``. An int
    attribute is checked the same way (never nan). Every float not named
    must still be finite or nan (an inf is never a state)."""
    for entry in spec.split(";"):
        w = entry.split()
        if not w:
            continue
        v = getattr(obj, w[0])
        if v is None or v != v:     # (None: a time stamp not given)
            if len(w) > 3:
                continue
            raise CheckpointError("%s checkpoint holds %s=nan, which must be a number; not "
                                  "written by this tinygeo" % (what, w[0]))
        if (w[1] != "*" and v < float(w[1])) or (w[2] != "*" and v > float(w[2])):
            raise CheckpointError("%s checkpoint holds %s=%r outside %s..%s; not written by this "
                                  "tinygeo" % (what, w[0], v, w[1], w[2]))


def check_finite(values, what):
    """Refuse (CheckpointError) a list of restored floats holding an inf."""
    inf = float("inf")
    for v in values:
        if v == inf or v == -inf:
            raise CheckpointError("%s checkpoint holds an infinite value; not written by this "
                                  "tinygeo" % (what,))
