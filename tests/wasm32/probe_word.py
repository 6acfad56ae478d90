# Prints: implementation name, sys.maxsize, bytes of heap one new float takes.
import gc
import sys


def one_float(x):
    gc.disable()
    a = gc.mem_alloc()
    y = x * 1.5
    b = gc.mem_alloc()
    gc.enable()
    return b - a, y


print(sys.implementation.name, sys.maxsize, one_float(2.0)[0])
