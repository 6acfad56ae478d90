"""Events of the column on an invented noisy flight (ascent, burst, fall,
landing), a GPS re-anchor and a checkpoint restore half-way; prints
whitespace-separated tokens, identical under CPython and MicroPython, and
ends with 'done'. Noise comes from a small linear congruential generator so
both interpreters see the same numbers (their random modules differ)."""
from tinygeo import standard
from tinygeo.column import (Column, EV_LEVEL, EV_TROPOPAUSE, EV_BURST, EV_LANDED, EV_LAUNCH,
                            PH_LANDED)

_state = [12345]


def noise():
    # uniform in -1..1 (Numerical Recipes LCG constants 1664525, 1013904223)
    _state[0] = (1664525 * _state[0] + 1013904223) % 4294967296
    return _state[0] / 2147483648.0 - 1.0


def readings():
    t = 0.0
    h = 0.0
    for k in range(60):                 # one minute on the ground
        yield h, t
        t += 1.0
    while h < 20000.0:                  # ascent at 5 m/s
        yield h, t
        h += 5.0
        t += 1.0
    while h > 300.0:                    # fall, slowing down in denser air
        h -= 5.0 + 25.0 * h / 20000.0
        t += 1.0
        yield h, t
    for k in range(120):                # landed at 300 m
        t += 1.0
        yield 300.0, t


def show(col, bits):
    words = ["ev", "%d" % col.count, "%d" % bits]
    if bits & EV_LEVEL:
        words += ["level", "%.0f" % col.level_p_pa, "%.3f" % col.level_gph_m]
    if bits & EV_TROPOPAUSE:
        words += ["tropopause", "%.2f" % col.tropopause_p_pa, "%.3f" % col.tropopause_gph_m]
    if bits & EV_BURST:
        words += ["burst", "%.3f" % col.burst_gph_m, "%.1f" % col.burst_time_s]
    if bits & EV_LANDED:
        words += ["landed", "%.1f" % col.time_s, "%.3f" % col.height_m]
    if bits & EV_LAUNCH:
        words += ["launch", "%.1f" % col.launch_time_s]
    print(" ".join(words))


col = Column(-45.9, start_height_m=300.0)
blob = None
for h, t in readings():
    p = standard.standard_pressure(h) + 2.0 * noise()
    tk = standard.standard_temperature(h) + 0.2 * noise()
    gps = h + 300.0 + 8.0 * noise() if col.count % 100 == 0 else None
    bits = col.feed(p, tk, 40.0 + 20.0 * noise(), t, gps)
    if bits:
        show(col, bits)
    if col.count == 3001:
        blob = col.to_bytes()
        print("reanchor", "%.3f" % col.gps_diff_m, "%.3f" % col.reanchor_gps(), "%.3f" % col.height_m)
print("end", col.phase == PH_LANDED, "%.3f" % col.gph_m, "%.3f" % col.sigma_m, col.count)
# the restored column continues like the original would have from that point
back = Column.from_bytes(blob)
print("restored", back.count, "%.6f" % back.gph_m, "%.6f" % back.sigma_m)
print("done")
