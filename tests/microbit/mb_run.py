"""Run a MicroPython script on an emulated BBC micro:bit and return its output.

The micro:bit firmware (Debian package ``firmware-microbit-micropython``,
MicroPython 1.9.2 with 30-bit ``OBJ_REPR_C`` floats) runs under
``qemu-system-arm -M microbit``; the script is sent through the raw REPL on the
emulated UART (recipe in /work/shared/toolchain.md section 6). The old
firmware has no f-strings and about 8 KB of free heap: keep scripts short.

Install (Debian 12): ``apt-get install -y --no-install-recommends
qemu-system-arm firmware-microbit-micropython``.

Usage::

    python tests/microbit/mb_run.py script.py     # prints the output; exit 1 on error
"""
import os
import select
import shutil
import subprocess
import sys
import time

FIRMWARE = "/usr/share/firmware-microbit-micropython/firmware.hex"
QEMU = "qemu-system-arm"


class DeviceError(RuntimeError):
    """The script raised on the emulated device; the message is its traceback."""


def missing():
    """None if qemu and the firmware are installed, else the reason why not."""
    if shutil.which(QEMU) is None:
        return "%s not installed (apt-get install qemu-system-arm)" % QEMU
    if not os.path.exists(FIRMWARE):
        return "%s not installed (apt-get install firmware-microbit-micropython)" % FIRMWARE
    return None


def run(code, timeout=60.0, chunk=32, pause=0.05):
    """Run ``code`` on the emulated micro:bit; return its standard output as
    text (newlines normalised). Raises DeviceError with the traceback if the
    script raised, TimeoutError if the device did not answer in time.

    The code is written in ``chunk``-byte pieces with ``pause`` seconds
    between them, because the emulated UART drops bytes on larger writes."""
    return run_session([code], timeout, chunk, pause)[0]


def run_session(codes, timeout=60.0, chunk=32, pause=0.05):
    """Run several scripts one after the other in ONE boot of the device
    (they share the global namespace of the raw REPL, so a long program can
    be sent one definition at a time within the small heap); return the list
    of their outputs. Stops at the first script that raises (DeviceError,
    whose message also says which script). ``timeout`` is per script."""
    p = subprocess.Popen([QEMU, "-M", "microbit", "-display", "none", "-monitor", "none",
                          "-serial", "stdio", "-device", "loader,file=" + FIRMWARE],
                         stdin=subprocess.PIPE, stdout=subprocess.PIPE,
                         stderr=subprocess.STDOUT)
    os.set_blocking(p.stdout.fileno(), False)
    state = {"buf": b""}

    def read_until(token, t_end):
        # block in select() until the device writes (or the deadline passes):
        # the wait ends on the device's own output, never on a fixed sleep
        while token not in state["buf"]:
            left = t_end - time.time()
            if left <= 0:
                raise TimeoutError("micro:bit: waiting for %r; got %r"
                                   % (token, state["buf"][-300:]))
            if p.poll() is not None and not state["buf"]:
                raise RuntimeError("qemu exited with code %s" % p.returncode)
            ready, _, _ = select.select([p.stdout], [], [], left)
            if ready:
                data = p.stdout.read()
                if data:
                    state["buf"] += data
                elif p.poll() is not None:
                    raise RuntimeError("qemu exited with code %s; got %r"
                                       % (p.returncode, state["buf"][-300:]))
        buf = state["buf"]
        i = buf.index(token) + len(token)
        state["buf"] = buf[i:]
        return buf[:i]

    outs = []
    try:
        t_end = time.time() + timeout
        read_until(b">>> ", t_end)     # the boot banner ends with the REPL prompt
        p.stdin.write(b"\r\x03\x03")   # interrupt whatever runs (nothing, on this firmware)
        p.stdin.flush()
        read_until(b">>> ", t_end)
        p.stdin.write(b"\x01")         # raw REPL
        p.stdin.flush()
        read_until(b"raw REPL; CTRL-B to exit\r\n>", t_end)
        for k, code in enumerate(codes):
            t_end = time.time() + timeout
            data = code.encode()
            for i in range(0, len(data), chunk):
                p.stdin.write(data[i:i + chunk])
                p.stdin.flush()
                # a rate limit, not a synchronisation: the emulated UART has no
                # flow control and drops bytes when written faster, and the raw
                # REPL of this firmware echoes nothing to wait for
                time.sleep(pause)
            p.stdin.write(b"\x04")         # end of script: compile and run
            p.stdin.flush()
            read_until(b"OK", t_end)
            out = read_until(b"\x04", t_end)[:-1].decode("utf-8", "replace").replace("\r\n", "\n")
            err = read_until(b"\x04", t_end)[:-1].decode("utf-8", "replace").replace("\r\n", "\n")
            read_until(b">", t_end)        # ready for the next script
            if err:
                raise DeviceError("script %d of %d: %s%s" % (
                    k + 1, len(codes), err, "\n(output before the error:)\n" + out if out else ""))
            outs.append(out)
    finally:
        p.kill()
        p.wait()
    return outs


def main(argv):
    if len(argv) != 2:
        sys.stderr.write("usage: python mb_run.py SCRIPT.py\n")
        return 2
    why = missing()
    if why:
        sys.stderr.write(why + "\n")
        return 2
    with open(argv[1]) as f:
        code = f.read()
    try:
        sys.stdout.write(run(code))
    except DeviceError as e:
        sys.stderr.write(str(e))
        return 1
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
