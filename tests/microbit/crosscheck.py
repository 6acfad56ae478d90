"""Run the float sequences of floatseq.py on the emulated micro:bit and in
every floatemu mode; print a per-operation agreement table.

    python tests/microbit/crosscheck.py [BATCHES] [ROWS] > tests/microbit/observed.txt

Each batch is one qemu run (about 2-3 s) of ROWS rows of operations on random
operands (seeds 1..BATCHES); batch 1 also prints the decimal literals.
"""
import contextlib
import io
import os
import subprocess
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path[:0] = [HERE, os.path.dirname(HERE)]

import floatemu  # noqa: E402
import floatseq  # noqa: E402
import mb_run  # noqa: E402


def emulate(mode, text):
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        floatemu.load_source(mode, text, "floatseq")
    return buf.getvalue()


def firmware_version():
    return mb_run.run("import sys\nprint(sys.version, sys.implementation)\n").strip()


def package_versions():
    try:
        out = subprocess.run(["dpkg-query", "-W", "qemu-system-arm", "firmware-microbit-micropython"],
                             capture_output=True, text=True).stdout
        return " ".join(out.split())
    except OSError:
        return "dpkg-query not available"


def main(argv):
    batches = int(argv[1]) if len(argv) > 1 else 8
    rows = int(argv[2]) if len(argv) > 2 else 16
    why = mb_run.missing()
    if why:
        sys.stderr.write(why + "\n")
        return 2
    totals = {m: {} for m in floatemu.MODES}
    order = []
    t0 = time.time()
    device_lines = []
    for seed in range(1, batches + 1):
        text = floatseq.script(seed, rows, literals=(seed == 1))
        dev = mb_run.run(text)
        device_lines.append(dev)
        for mode in floatemu.MODES:
            res = floatseq.compare(dev, emulate(mode, text))
            for label, (ok, n, worst) in res.items():
                if label not in order:
                    order.append(label)
                t = totals[mode].setdefault(label, [0, 0, 0])
                t[0] += ok
                t[1] += n
                t[2] = max(t[2], worst)
    took = time.time() - t0
    print("# micro:bit (qemu) vs floatemu, float32 bit patterns compared")
    print("# command: python tests/microbit/crosscheck.py %d %d" % (batches, rows))
    print("# device: %s" % firmware_version())
    print("# packages: %s" % package_versions())
    print("# %d qemu runs, %d rows of operations each (random operand bit patterns,"
          " seeds 1..%d), %.0f s" % (batches, rows, batches, took))
    print("# cell = agreeing/total, and in brackets the largest difference in float32 ulps"
          " (4 ulps = one step of the 30-bit format)")
    print("%-28s" % "operation" + "".join("%16s" % m for m in floatemu.MODES))
    for label in order:
        cells = []
        for mode in floatemu.MODES:
            ok, n, worst = totals[mode][label]
            cells.append("%16s" % ("%d/%d" % (ok, n) + (" [%d]" % worst if ok != n else "")))
        print("%-28s" % label + "".join(cells))
    for mode in floatemu.MODES:
        ok = sum(v[0] for v in totals[mode].values())
        n = sum(v[1] for v in totals[mode].values())
        print("# total %-5s %d/%d agree" % (mode, ok, n))
    print("# first batch, device output:")
    for line in device_lines[0].strip().split("\n"):
        print("#   " + line)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
