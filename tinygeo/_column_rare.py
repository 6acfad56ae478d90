"""The rarely used parts of tinygeo.column.Column: the checkpoint encoding and
decoding (``to_bytes``, ``from_bytes``, the CRC-32), ``reanchor_gps`` and
``repr``. The Column methods import this module the first time one of them
is called, so a logger that never checkpoints, re-anchors or prints a column
does not hold this bytecode in RAM (bench/size.py). Same code, same results:
the layout, formulas and messages are documented in tinygeo/column.py (the
field-name tuples of the layout stay there).
"""
import struct

from .column import (_CFG_F, _CFG_I, _ST_F, _ST_I, _MAGIC, _VERSION, _HEAD,
                     CHECKPOINT_BYTES, PH_LANDED, WMO_LAPSE_K_PER_GPM)
from .potential import gph_series
from .constants import WGS84, GRS80
from .errors import TinygeoError, CheckpointError, check_range, quote

try:
    from binascii import crc32 as _crc32
    _HAVE_CRC32 = True
except ImportError:  # pragma: no cover - firmware without binascii.crc32
    _HAVE_CRC32 = False

_HEAD_LEN = struct.calcsize(_HEAD)
_PAYLOAD = "<" + "d" * (len(_CFG_F) + len(_ST_F)) + "i" * (len(_CFG_I) + len(_ST_I))
_PAYLOAD_LEN = struct.calcsize(_PAYLOAD)


def _crc(data):
    """CRC-32 (IEEE 802.3, reflected polynomial 0xEDB88320, as zlib/binascii)."""
    if _HAVE_CRC32:
        return _crc32(data) & 0xFFFFFFFF
    return _crc_soft(data)


def _crc_table():
    out = []
    for i in range(16):
        c = i
        for _ in range(4):
            c = (c >> 1) ^ (0xEDB88320 if c & 1 else 0)
        out.append(c)
    return tuple(out)


_CRC_NIBBLE = _crc_table()


def _crc_soft(data):
    # The same CRC-32, four bits at a time with a 16-entry table.
    c = 0xFFFFFFFF
    t = _CRC_NIBBLE
    for b in data:
        c = t[(c ^ b) & 15] ^ (c >> 4)
        c = t[(c ^ (b >> 4)) & 15] ^ (c >> 4)
    return c ^ 0xFFFFFFFF


def reanchor_gps(self, sigma_gps_m):
    """Column.reanchor_gps (see its docstring)."""
    if self.count == 0 or self._gps_n != self.count:
        raise TinygeoError("reanchor_gps(): the latest reading has no gps_m; feed a reading "
                           "with gps_m first")
    sg = check_range("sigma_gps_m", sigma_gps_m, 0, 10000, "m")
    target = gph_series(self.gps_m, self._pc, self.ellipsoid.a_m)
    d = target - self.gph_m
    old_h = self.height_m
    self.gph_m = target
    self._c = 0.0
    for name in ("max_gph_m", "_g_t", "_min_gph", "_launch_gph", "_burst_line", "_tp_g",
                 "_tp_top", "_env_g"):
        setattr(self, name, getattr(self, name) + d)
    self._tp_th = self._tp_th + WMO_LAPSE_K_PER_GPM * d
    self._n_g, self._n_h, self._n_k1, self._n_k2, self._n_lo, self._n_hi = self._nodes(target)
    self.height_m = self._n_h
    self._h_tm = self._h_tm + (self.height_m - old_h)
    self.gps_diff_m = self.height_m - self.gps_m
    # uncertainty restarts here: the reading is the new (noisy) start
    self._var_done = 0.0
    self._ct = 0.0
    self._tm2 = 0.0
    self._p_start = self.p_pa
    self._sum_rh = 0.0
    self._sum_p = 0.0
    self._var_anchor = sg * sg
    return self.height_m - old_h


def to_bytes(self):
    """Column.to_bytes: the checkpoint blob (layout in tinygeo/column.py)."""
    vals = [getattr(self, n) for n in _CFG_F]
    vals += [getattr(self, n) for n in _ST_F]
    vals += [int(getattr(self, n)) for n in _CFG_I]
    vals += [getattr(self, n) for n in _ST_I]
    body = struct.pack(_HEAD, _MAGIC, _VERSION, _PAYLOAD_LEN) + struct.pack(_PAYLOAD, *vals)
    return body + struct.pack("<I", _crc(body))


def _opt(x):
    # a stored optional setting: nan means None
    return None if x != x else x


def from_bytes(cls, blob, on_event):
    """Column.from_bytes (see its docstring)."""
    try:
        blob = bytes(blob)
    except (TypeError, ValueError):
        raise CheckpointError("checkpoint is %s, not bytes; pass what to_bytes() returned"
                              % quote(blob))
    n = len(blob)
    if n < _HEAD_LEN + 4:
        raise CheckpointError("checkpoint of %d bytes is too short (a blob has %d); truncated?"
                              % (n, CHECKPOINT_BYTES))
    magic, version, length = struct.unpack(_HEAD, blob[:_HEAD_LEN])
    if magic != _MAGIC:
        raise CheckpointError("not a tinygeo column checkpoint (magic %r, expected %r)"
                              % (magic, _MAGIC))
    if version != _VERSION:
        raise CheckpointError("checkpoint version %d, this tinygeo reads version %d; restart "
                              "the column or use the tinygeo that wrote it" % (version, _VERSION))
    if length != _PAYLOAD_LEN or n != CHECKPOINT_BYTES:
        raise CheckpointError("checkpoint of %d bytes (payload %d), expected %d (payload %d); "
                              "truncated or corrupted" % (n, length, CHECKPOINT_BYTES, _PAYLOAD_LEN))
    body = blob[:n - 4]
    (crc,) = struct.unpack("<I", blob[n - 4:])
    if crc != _crc(body):
        raise CheckpointError("checkpoint CRC-32 mismatch (stored %08x, computed %08x): "
                              "corrupted; use an older checkpoint" % (crc, _crc(body)))
    vals = struct.unpack(_PAYLOAD, body[_HEAD_LEN:])
    nf = len(_CFG_F)
    ns = len(_ST_F)
    # the settings, in the order of _CFG_F and _CFG_I
    (lat, start, anchor, sp, st, srh, bp, bt, brh, rate, land_s, land_tol, launch, drop, trop,
     rh_tol, geoid, t_step, t_rate, t_grad) = vals[:nf]
    ell, ice, dry, burst_n, track = vals[nf + ns:nf + ns + len(_CFG_I)]
    if ell not in (0, 1):
        raise CheckpointError("checkpoint holds an unknown ellipsoid code %d" % ell)
    try:
        col = cls(lat, start, _opt(anchor), (WGS84, GRS80)[ell], ice, dry, sp, st, srh, bp, bt, brh,
                  _opt(rate), land_s, land_tol, launch, drop, burst_n, trop, rh_tol, track,
                  on_event, _opt(geoid), _opt(t_step), t_rate, t_grad)
    except TinygeoError as e:
        raise CheckpointError("checkpoint holds settings the column refuses: %s" % e)
    i = nf
    for name in _ST_F:
        setattr(col, name, vals[i])
        i += 1
    i = nf + ns + len(_CFG_I)
    for name in _ST_I:
        setattr(col, name, vals[i])
        i += 1
    if not (0 <= col.phase <= PH_LANDED and 0 <= col._lvl <= 16 and 0 <= col._tp_state <= 3
            and col.count >= 0 and col.rejected >= 0):
        raise CheckpointError("checkpoint holds an impossible state (phase %d, level index %d, "
                              "count %d); not written by this tinygeo"
                              % (col.phase, col._lvl, col.count))
    return col


def __repr__(self):
    """Column.__repr__."""
    return "Column(lat_deg=%r, count=%d, p_pa=%r, gph_m=%r, phase=%d)" % (
        self.lat_deg, self.count, self.p_pa, self.gph_m, self.phase)
