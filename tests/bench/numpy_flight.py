"""numpy_flight.py - the same free-flight step written with numpy/scipy FFTs.

For comparison in `make bench` only: forward FFT, multiply by a precomputed
phase array exp(-i hbar k^2 t / 2m), inverse FFT - what a careful numpy user
would write.  scipy.fft is used with workers=threads (numpy.fft has no
threads).  Prints "shape,threads,ms" lines.  Usage: numpy_flight.py [quick], or
numpy_flight.py one INDEX THREADS (one size of SIZES; prints the ms only)."""
import sys
import time

import numpy as np
import scipy.fft as sfft

SIZES = [(1 << 20,), (1 << 22,), (1024, 1024), (2048, 2048), (128, 128, 128), (256, 256, 256)]
QUICK = [(1 << 20,), (1024, 1024), (128, 128, 128)]


def best_ms(fn, blocks=3, min_seconds=0.2):
    fn()
    best = float("inf")
    for _ in range(blocks):
        reps, t0 = 0, time.perf_counter()
        while True:
            fn()
            reps += 1
            t1 = time.perf_counter()
            if t1 - t0 >= min_seconds:
                break
        best = min(best, 1e3 * (t1 - t0) / reps)
    return best


def setup(shape):
    psi = np.exp(-np.linspace(-1, 1, int(np.prod(shape))) ** 2).astype(np.complex128).reshape(shape)
    ks = np.meshgrid(*[np.fft.fftfreq(n, 1.0 / n) * 2 * np.pi for n in shape], indexing="ij")
    k2 = sum(k * k for k in ks)
    return psi, np.exp(-1j * 1e-3 * k2 / 2)


def step(psi, phase, threads):
    phi = sfft.fftn(psi, workers=threads, overwrite_x=False)
    phi *= phase
    return sfft.ifftn(phi, workers=threads, overwrite_x=True)


def main():
    if len(sys.argv) == 4 and sys.argv[1] == "one":
        # one size (index into SIZES) and thread count: prints the ms only
        shape, threads = SIZES[int(sys.argv[2])], int(sys.argv[3])
        psi, phase = setup(shape)
        print(f"{best_ms(lambda: step(psi, phase, threads)):.6f}", flush=True)
        return
    sizes = QUICK if len(sys.argv) > 1 and sys.argv[1] == "quick" else SIZES
    for shape in sizes:
        psi, phase = setup(shape)
        for threads in (1, 2):
            label = f"{len(shape)}D " + "x".join(str(n) for n in shape)
            print(f"{label},{threads},{best_ms(lambda: step(psi, phase, threads)):.6f}", flush=True)


if __name__ == "__main__":
    main()
