"""Cross-checks of the .npy chain file against NumPy itself.

NumPy's reader and writer are the reference for the .npy format (numpy.lib.format,
NEP 1). This script
  1. writes numpy_chain.npy (format 1.0) and numpy_unicode.npy (a non-ASCII field name,
     which NumPy writes as format 3.0): structured arrays of shape (steps, walkers) in the
     chain layout, with values from a formula that mcmc/npy_test.go recomputes exactly;
  2. opens go_chain.npy, written by the Go test TestNpyGolden, with
     numpy.load(path, mmap_mode="r") and writes what NumPy sees (format version, shape,
     field names and types, every value as float.hex) to go_chain_read.txt, which
     TestNpyReadByNumPy compares with the chain the Go code wrote.

Run from the repository root:  /usr/bin/python3 testdata/npy/npy_reference.py
Made with Debian's python3-numpy (the version is written into go_chain_read.txt).
"""
import os
import numpy as np
import numpy.lib.format as fmt

here = os.path.dirname(os.path.abspath(__file__))


def chain_layout(names):
    return np.dtype([("step", "<i8"), ("walker", "<i8"), ("log_density", "<f8")] +
                    [(n, "<f8") for n in names])


def fill(a):
    steps, walkers = a.shape
    for t in range(steps):
        for k in range(walkers):
            a[t, k]["step"] = 3 * (t + 1)
            a[t, k]["walker"] = k
            a[t, k]["log_density"] = -(4 * t + k) / 8
            names = a.dtype.names[3:]
            a[t, k][names[0]] = 8 + t / 4 + k / 16
            if len(names) > 1:
                a[t, k][names[1]] = (-1) ** k * 2.0 ** -(t + k)
    return a


np.save(os.path.join(here, "numpy_chain.npy"),
        fill(np.zeros((5, 4), dtype=chain_layout(["R0", "o'clock"]))))
np.save(os.path.join(here, "numpy_unicode.npy"),
        fill(np.zeros((2, 2), dtype=chain_layout(["\u0398" + "0"]))))

path = os.path.join(here, "go_chain.npy")
with open(path, "rb") as f:
    version = fmt.read_magic(f)
c = np.load(path, mmap_mode="r")
with open(os.path.join(here, "go_chain_read.txt"), "w") as out:
    out.write("# numpy %s: numpy.load(go_chain.npy, mmap_mode='r')\n" % np.__version__)
    out.write("version %d.%d\n" % version)
    out.write("shape %d %d\n" % c.shape)
    out.write("fields %s\n" % " ".join("%s:%s" % (n, c.dtype[n].str) for n in c.dtype.names))
    for t in range(c.shape[0]):
        for k in range(c.shape[1]):
            r = c[t, k]
            vals = [str(int(r["step"])), str(int(r["walker"]))]
            vals += [float(r[n]).hex() for n in c.dtype.names[2:]]
            out.write(" ".join(vals) + "\n")
