"""Short float sequences run on the emulated micro:bit and in floatemu.

``script(seed, n)`` returns the text of one MicroPython 1.9.2 script (no
f-strings, small heap) that prints the float32 bit pattern (``ustruct.pack('<f')``,
i.e. the value a float object holds as the runtime reads it) of the results of
``n`` rows of operations on operands made from random bit patterns, plus a few
decimal literals. The same text runs unchanged under CPython inside
``floatemu.load_source`` (``struct`` instead of ``ustruct``).

``compare(device_text, emulated_text)`` counts agreements per operation label.
The operand bit patterns have random low bits on purpose: unpacking them makes
a float object, so the runtime's storing rule is exercised from the first step.
"""
import random
import struct

# label of each printed value, in print order (row kinds 'A' and 'M')
ARITH = ["a", "b", "c", "a+b", "a-b", "a*b", "a/b", "-a", "a*b+c", "(a-c)/(b+c)",
         "a*a*a-b*c/a", "a+3", "a*1000", "a/7", "3*b-2", "((a*.5+b)*a+c)*a"]
MATHS = ["sqrt|a|", "log|a|", "exp(c)", "|a|**0.190263", "sin(c)", "atan2(a,b)",
         "29.27*(a+b)*log(|b|/|a|)", "floor(a)+.25", "s+=a*b"]
LITERALS = ["0.1", "287.05287", "9.80665", "6378137.0", "0.0065", "101325.0", "288.15",
            "0.190263", "44330.8", "8.31432", "0.0289644", "6.112", "17.62", "243.12",
            "1e-3", "3.986004418e14", "7.292115e-5", "0.00669437999014", "1013.25",
            "273.15"]

HEAD = """try:
    import ustruct as S
except ImportError:
    import struct as S
import math
P=S.pack
U=S.unpack
def f(w):
    return U('<f',P('<I',int(w,16)))[0]
def h(x):
    return '%08x'%U('<I',P('<f',x))[0]
"""

BODY = """D='%s'.split()
s=0.0
for i in range(0,len(D),3):
    a=f(D[i]);b=f(D[i+1]);c=f(D[i+2])
    print('A',h(a),h(b),h(c),h(a+b),h(a-b),h(a*b),h(a/b),h(-a),h(a*b+c),h((a-c)/(b+c)),h(a*a*a-b*c/a),h(a+3),h(a*1000),h(a/7),h(3*b-2),h(((a*.5+b)*a+c)*a))
    s=s+a*b
    print('M',h(math.sqrt(abs(a))),h(math.log(abs(a))),h(math.exp(c)),h(abs(a)**0.190263),h(math.sin(c)),h(math.atan2(a,b)),h(29.27*(a+b)*math.log(abs(b)/abs(a))),h(math.floor(a)+.25),h(s))
"""


def _word(rng, lo_exp, hi_exp):
    sign = rng.getrandbits(1) << 31
    exp = rng.randint(lo_exp, hi_exp) + 127
    return sign | (exp << 23) | rng.getrandbits(23)


def operands(seed, n):
    """3*n random float32 bit patterns (a, b in about 1e-3..1e5, c in 1e-2..40)."""
    rng = random.Random(seed)
    words = []
    for _ in range(n):
        words += [_word(rng, -10, 16), _word(rng, -10, 16), _word(rng, -7, 5)]
    return words


def script(seed, n=12, literals=False):
    """The script text: ``n`` rows of operations; with ``literals`` also one
    line of the bit patterns of the decimal literals in LITERALS."""
    text = HEAD
    if literals:
        text += "print('L'," + ",".join("h(%s)" % s for s in LITERALS) + ")\n"
    data = " ".join("%08x" % w for w in operands(seed, n))
    return text + BODY % data


def labelled(text):
    """Split printed output into a list of (label, hex word) pairs."""
    out = []
    for line in text.split("\n"):
        words = line.split()
        if not words:
            continue
        labels = {"A": ARITH, "M": MATHS, "L": ["literal " + s for s in LITERALS]}[words[0]]
        if len(words) - 1 != len(labels):
            raise ValueError("malformed line %r" % line)
        out += list(zip(labels, words[1:]))
    return out


def compare(device_text, emulated_text):
    """Return {label: [agree, total, max |ulp diff|]} for two outputs of the same script."""
    dev, emu = labelled(device_text), labelled(emulated_text)
    if [k for k, _ in dev] != [k for k, _ in emu]:
        raise ValueError("outputs do not line up")
    res = {}
    for (label, x), (_, y) in zip(dev, emu):
        r = res.setdefault(label, [0, 0, 0])
        r[1] += 1
        if x == y:
            r[0] += 1
        else:
            r[2] = max(r[2], abs(_ordered(int(x, 16)) - _ordered(int(y, 16))))
    return res


def _ordered(u):
    return u if u < 0x80000000 else 0x80000000 - u


def describe(word):
    """'3eaaaaa8 (0.33333325)' for a hex word."""
    return "%s (%.9g)" % (word, struct.unpack("<f", bytes.fromhex(word)[::-1])[0])
