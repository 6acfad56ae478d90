"""Heights, events and a checkpoint of the column on an invented sounding;
prints whitespace-separated tokens, identical under CPython and MicroPython
(tests/test_micropython.py compares them), and ends with 'done'."""
import math

from tinygeo import standard
from tinygeo.column import Column, EV_LEVEL, EV_TROPOPAUSE, EV_BURST, EV_LANDED, EV_LAUNCH
from tinygeo.errors import ReadingError, CheckpointError


def profile(h):
    # invented: standard temperature with two waves, humidity 25..95 %
    t = standard.standard_temperature(h) + 3.0 * math.sin(h / 1700.0) + 1.5 * math.cos(h / 4100.0)
    rh = 60.0 + 35.0 * math.sin(h / 2300.0)
    return t, rh


events = []


def on_event(col, bits):
    events.append((col.count, bits))


col = Column(48.2, start_height_m=512.0, on_event=on_event)
ts = 0.0
h = 0.0
blob = None
while h <= 31000.0:
    t, rh = profile(h)
    gps = 512.0 + h * 1.003 if col.count % 50 == 0 else None
    bits = col.feed(standard.standard_pressure(h), t, rh if col.count % 7 else None, ts, gps)
    if bits & EV_LEVEL:
        print("level", col.level_p_pa, "%.4f" % col.level_gph_m, "%.4f" % col.level_height_m,
              "%.4f" % col.level_t_k)
    if bits & EV_TROPOPAUSE:
        print("tropopause", col.tropopause_p_pa, "%.4f" % col.tropopause_gph_m, "%.4f" % col.tropopause_t_k)
    if bits & EV_LAUNCH:
        print("launch", col.count)
    if col.count % 500 == 0:
        print("row", col.count, "%.6f" % col.gph_m, "%.6f" % col.height_m, "%.6f" % col.rate_m_s,
              "%.6f" % col.sigma_m, "%.6f" % col.sigma_random_m, "%.6f" % col.sigma_bias_m,
              col.flags, col.phase)
    if col.count == 3000:
        blob = col.to_bytes()
    h += 10.0
    ts += 2.0
# the fall and the landing
while h > 0.0:
    h = h - 150.0 if h > 150.0 else 0.0
    ts += 5.0
    col.feed(standard.standard_pressure(h), profile(h)[0], None, ts)
for k in range(20):
    ts += 5.0
    col.feed(standard.standard_pressure(0.0), profile(0.0)[0], None, ts)
print("burst", "%.4f" % col.burst_gph_m, "%.1f" % col.burst_time_s, "phase", col.phase)
print("final", col.count, "%.6f" % col.gph_m, "%.6f" % col.height_m, "%.4f" % col.gps_diff_m)
print("events", len(events), sum(b for c, b in events))
# bad readings leave the column unchanged
g = col.gph_m
for args in ((float("nan"), 280.0), (90000.0, 25.0), (90000.0, 280.0, 150.0), (0.5 * col.p_pa, 280.0, None, ts + 1.0)):
    try:
        col.feed(*args)
        print("accepted?")
    except ReadingError as e:
        print("rejected", e.reason)
print("unchanged", col.gph_m == g, col.rejected)
# checkpoint: size, CRC (same bytes on both interpreters), restore and corruption
print("blob", len(blob), "%08x" % (int.from_bytes(blob[-4:], "little")))
back = Column.from_bytes(blob)
print("restored", back.count, "%.6f" % back.gph_m)
bad = bytearray(blob)
bad[100] ^= 4
try:
    Column.from_bytes(bytes(bad))
    print("corruption missed")
except CheckpointError:
    print("corruption detected")
print("done")
