"""Instructions per tg_column_feed of the C port (ports/c), counted by valgrind.

Run from the repository root (needs gcc and valgrind)::

    python bench/c_feed_cost.py [--n N]

Builds ports/c/*.c with a small driver written by this script, with
``gcc -std=c99 -O2 -ffp-contract=off`` (the Makefile's optimisation and
contraction flags), twice: TG_FLOAT double and TG_FLOAT float. The driver
reads the readings from a binary file into an array, then feeds them one by
one to a fresh tg_column (default settings, latitude 48.2 deg). It runs under
``valgrind --tool=callgrind --toggle-collect=tg_column_feed``, so only the
instructions executed inside tg_column_feed and what it calls (libm's exp and
log included) are counted: I(N). The figure is the cost of one more reading,
(I(2N) - I(N)) / N: the per-flight costs (the 16 mandatory levels, the
tropopause, launch) are the same for N and 2N readings over the same span and
cancel out. I(N) / N, the average with them, is printed beside it.

Readings: an ascent from 0 to 35 km geopotential, N readings evenly spaced
(2N for the second run), pressure and temperature of the U.S. Standard
Atmosphere 1976 (tinygeo.standard, which follows its Table 4 and eq. 33a/33b),
relative humidity 60 + 30 sin(gph / 2000 m) %, a time stamp on every reading
(5 m/s ascent), no GPS height: every reading is accepted and takes the whole
path of feed (humidity, layer, Kahan step, node pair, rate, temperature-step
allowance, uncertainty, events). Instruction counts are x86_64 counts of
this machine's gcc and glibc; a Cortex-M core executes other instructions
(and, without a double FPU, the double build calls a soft-float library).
"""
import os
import shutil
import struct
import subprocess
import sys
import tempfile
import math
import re

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
PORT = os.path.join(ROOT, "ports", "c")
sys.path.insert(0, ROOT)

from tinygeo.standard import standard_pressure, standard_temperature  # noqa: E402

SRCS = ("constants.c", "gravity.c", "potential.c", "moisture.c", "layers.c", "standard.c",
        "sealevel.c", "checkpoint.c", "column.c")
CFLAGS = ["-std=c99", "-O2", "-ffp-contract=off", "-Wall", "-Wextra", "-Werror"]
TOP_GPM = 35000.0
ASCENT_M_S = 5.0
LAT_DEG = 48.2

DRIVER = r"""
#include <stdio.h>
#include <stdlib.h>
#include "tinygeo.h"

int main(int argc, char **argv)
{
    FILE *f;
    long n, i, rejected = 0;
    double rec[4];
    TG_FLOAT *v;
    tg_time *ts;
    tg_column col;
    tg_column_config cfg;
    int bits, all = 0;
    if (argc != 3)
        return 2;
    n = atol(argv[2]);
    v = malloc((size_t)n * 3 * sizeof *v);
    ts = malloc((size_t)n * sizeof *ts);
    f = fopen(argv[1], "rb");
    if (v == NULL || ts == NULL || f == NULL)
        return 2;
    for (i = 0; i < n; i++) {   /* p_pa, t_k, rh_pct, time_s, as doubles */
        if (fread(rec, sizeof rec, 1, f) != 1)
            return 2;
        v[3 * i] = (TG_FLOAT)rec[0];
        v[3 * i + 1] = (TG_FLOAT)rec[1];
        v[3 * i + 2] = (TG_FLOAT)rec[2];
        ts[i] = rec[3];   /* time stamps are double in every build (tinygeo.h) */
    }
    fclose(f);
    tg_column_config_defaults(&cfg, (TG_FLOAT)LAT_DEG);
    if (tg_column_init(&col, &cfg) != TG_OK)
        return 2;
    for (i = 0; i < n; i++) {
        if (tg_column_feed(&col, v[3 * i], v[3 * i + 1], &v[3 * i + 2], ts[i], NULL, &bits) != TG_OK)
            rejected++;
        all |= bits;
    }
    printf("readings %ld rejected %ld event bits %d gph_m %.3f height_m %.3f\n", n, rejected, all,
           (double)tg_column_gph_m(&col), (double)tg_column_height_m(&col));
    free(v);
    free(ts);
    return 0;
}
"""


def readings(n, clock="1hz"):
    """n readings from 0 to TOP_GPM gpm: (p_pa, t_k, rh_pct, time_s). clock
    "1hz": time stamps in whole seconds, one per reading (a 1 Hz logger; the
    column keeps the gains of its height track while the step repeats, as
    Column._track does); "float": h / ASCENT_M_S, stamps whose steps differ
    in the last bits (a float clock; the track keeps its gains for a step
    within 5 % of theirs, so this costs what 1hz costs; before that window
    it cost one exp and two square roots more per reading)."""
    out = []
    for i in range(n):
        h = TOP_GPM * i / (n - 1)
        out.append((standard_pressure(h), standard_temperature(h),
                    60.0 + 30.0 * math.sin(h / 2000.0),
                    float(i) if clock == "1hz" else h / ASCENT_M_S))
    return out


def build(tmp, kind):
    exe = os.path.join(tmp, "feed_cost_" + kind)
    drv = os.path.join(tmp, "driver.c")
    with open(drv, "w") as f:
        f.write(DRIVER.replace("LAT_DEG", repr(LAT_DEG)))
    flags = CFLAGS + (["-DTG_FLOAT=float"] if kind == "float" else [])
    cmd = ["gcc"] + flags + ["-I", PORT, "-o", exe] + [os.path.join(PORT, s) for s in SRCS] + [drv, "-lm"]
    subprocess.run(cmd, check=True)
    return exe


def feed_instructions(tmp, exe, n, clock="1hz"):
    """(instructions inside tg_column_feed for n readings, {function: its own
    instructions among them}, the driver's line)."""
    data = os.path.join(tmp, "readings_%s_%d.bin" % (clock, n))
    with open(data, "wb") as f:
        for r in readings(n, clock):
            f.write(struct.pack("<4d", *r))
    out = os.path.join(tmp, "callgrind_%s_%s_%d.out" % (os.path.basename(exe), clock, n))
    r = subprocess.run(["valgrind", "--tool=callgrind", "--toggle-collect=tg_column_feed",
                        "--callgrind-out-file=" + out, exe, data, str(n)],
                       capture_output=True, text=True, check=True)
    total = None
    with open(out) as f:
        for line in f:
            if line.startswith(("summary:", "totals:")):
                total = int(line.split()[1])
    ann = subprocess.run(["callgrind_annotate", "--threshold=100", out], capture_output=True,
                         text=True, check=True).stdout
    by_fn = {}
    for line in ann.splitlines():
        m = re.match(r"\s*([\d,]+) \(\s*[\d.]+%\)\s+(\S+)", line)
        if m and "PROGRAM" not in line:
            fn = m.group(2).rsplit(":", 1)[-1]
            by_fn[fn] = by_fn.get(fn, 0) + int(m.group(1).replace(",", ""))
    return total, by_fn, r.stdout.strip()


def main(argv):
    n = 10000
    if "--n" in argv:
        n = int(argv[argv.index("--n") + 1])
    for tool in ("gcc", "valgrind", "callgrind_annotate"):
        if shutil.which(tool) is None:
            sys.exit("bench/c_feed_cost.py needs %s" % tool)
    gcc = subprocess.run(["gcc", "--version"], capture_output=True, text=True).stdout.splitlines()[0]
    vg = subprocess.run(["valgrind", "--version"], capture_output=True, text=True).stdout.strip()
    print("tg_column_feed instructions (%s; %s; %s)" % (gcc, " ".join(CFLAGS[:3]), vg))
    print("stream: 0..%.0f gpm, U.S. Standard Atmosphere 1976 p and T, rh 60 + 30 sin(gph/2000 m) %%, "
          "lat %.1f deg; clock 1hz: whole-second stamps, one per reading; clock float: "
          "gph / %.0f m/s" % (TOP_GPM, LAT_DEG, ASCENT_M_S))
    with tempfile.TemporaryDirectory(prefix="tinygeo_feed_cost_") as tmp:
        for kind in ("double", "float"):
            exe = build(tmp, kind)
            for clock in ("1hz", "float"):
                i1, f1, out1 = feed_instructions(tmp, exe, n, clock)
                i2, f2, out2 = feed_instructions(tmp, exe, 2 * n, clock)
                tag = "%s %s" % (kind, clock)
                print("%-12s N=%d: I(N) = %d (%s)" % (tag, n, i1, out1))
                print("%-12s 2N=%d: I(2N) = %d (%s)" % (tag, 2 * n, i2, out2))
                print("%-12s instructions per feed (I(2N) - I(N))/N = %.1f; I(N)/N = %.1f"
                      % (tag, (i2 - i1) / n, i1 / n))
                parts = sorted(((f2.get(k, 0) - f1.get(k, 0)) / n, k) for k in set(f1) | set(f2))
                print("%-12s   of which, per feed: %s" % (tag, ", ".join(
                    "%s %.1f" % (k, v) for v, k in reversed(parts) if v >= 0.05)))


if __name__ == "__main__":
    main(sys.argv[1:])
