"""Checkpoint blobs of a Column with one field set to a hostile value and a
valid CRC-32 (what a bug in a writer, flash wear past the CRC's reach, or a
hand-made file gives): shared by tests/test_column.py (Python) and
tests/test_c_port.py (the C port, under ASan/UBSan).

Every float field (settings, event state, both records, the first stamp) is
set to 0, -0.0, +1e300 and -1e300; every int field to 0, 2**31-1 and
-(2**31-1). Two columns are saved: a timed ascent with humidity and GPS
past launch and the first levels, and a column fed without time."""
import math
import struct

from tinygeo import column as _column
from tinygeo.checkpoint import crc32, HEAD_LEN, CRC_LEN

FLOATS = (0.0, -0.0, 1e300, -1e300)
INTS = (0, 2 ** 31 - 1, -(2 ** 31 - 1))
H_M = 7500.0


def reading(i, timed=True):
    """Reading i of the saved ascents (5 m/s after 30 s; a scale height of
    7.5 km; the GPS 1.5 m off), as feed's arguments."""
    z = 0.0 if i < 30 else 5.0 * (i - 30)
    p = 100000.0 * math.exp(-z / H_M)
    return (p, 288.0 - 0.0065 * z, 60.0 if i % 5 else None, i if timed else None,
            z + 1.5 if i % 7 == 0 else None)


def saved(timed, n=400):
    col = _column.Column(45.0, 0.0)
    for i in range(n):
        col.feed(*reading(i, timed))
    return col.to_bytes()


def layout():
    nf = len(_column._CFG_F) + len(_column._ST_F) + 1 + 2 * len(_column._REC_F)
    ni = len(_column._CFG_I) + len(_column._ST_I) + 2 * len(_column._REC_I)
    names = (["cfg." + x for x in _column._CFG_F] + ["st." + x for x in _column._ST_F] + ["t0"]
             + ["h." + x for x in _column._REC_F] + ["b." + x for x in _column._REC_F]
             + ["cfg." + x for x in _column._CFG_I] + ["st." + x for x in _column._ST_I]
             + ["h." + x for x in _column._REC_I] + ["b." + x for x in _column._REC_I])
    return nf, ni, names


def hostile_blobs():
    """[(label, blob, timed)] for every field and hostile value, both columns."""
    nf, ni, names = layout()
    out = []
    for timed in (True, False):
        blob = saved(timed)
        vals = list(struct.unpack("<%dd%di" % (nf, ni), blob[HEAD_LEN:-CRC_LEN]))
        for i, name in enumerate(names):
            for v in (FLOATS if i < nf else INTS):
                w = list(vals)
                w[i] = v
                body = blob[:HEAD_LEN] + struct.pack("<%dd%di" % (nf, ni), *w)
                out.append(("%s %s=%r" % ("timed" if timed else "untimed", name, v),
                            body + struct.pack("<I", crc32(body)), timed))
    return out


OUTPUTS = ("gph_m", "height_m", "rate_m_s", "noise_gph_m", "smooth_gph_m", "smooth_rate_gpm_s",
           "sigma_m", "sigma_random_m", "sigma_bias_m", "max_gph_m", "time_s", "gps_diff_m")
