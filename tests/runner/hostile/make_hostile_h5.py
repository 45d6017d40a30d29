"""make_hostile_h5.py FOLDER SECRET - writes hand-made hostile HDF5 files
for tests/runner/test_hostile_files.sh with h5py (python3-h5py, Debian).

Each file is small and attacks the reader in one way; the test loads each
with pf.load_wave and expects a clean refusal.  SECRET is a file outside the
allowed folders that the hostile files try to pull in."""
import os
import sys

import h5py
import numpy as np

folder, secret = sys.argv[1], sys.argv[2]
secret_h5 = secret + ".h5"

def path(name):
    return os.path.join(folder, name)

# A plain, valid file: the control case (it must load).
with h5py.File(path("plain.h5"), "w") as f:
    x = np.linspace(-1e-6, 1e-6, 16, endpoint=False)
    f["psi"] = (np.exp(-(x / 3e-7) ** 2)).astype(complex)
    f["x"] = x

# Shape (2^60,), chunked, never written: a few kB on disk, 2^64 bytes as
# complex doubles - the element count wraps a 64-bit size to 0.
with h5py.File(path("huge_shape.h5"), "w") as f:
    f.create_dataset("psi", shape=(2 ** 60,), dtype=complex, chunks=(1024,))

# Three axes each within the per-axis limit whose product overflows.
with h5py.File(path("overflow_3d.h5"), "w") as f:
    f.create_dataset("psi", shape=(2 ** 30, 2 ** 30, 2 ** 30), dtype=complex, chunks=(1, 1, 1024))

# Large but honest: 2^22 complex samples (64 MiB in memory), unwritten
# chunks so the file stays small; refused under a small --memory-cap.
with h5py.File(path("big_for_cap.h5"), "w") as f:
    f.create_dataset("psi", shape=(2 ** 22,), dtype=complex, chunks=(4096,))

# Small dataset, enormous compressed chunk (allowed for resizable
# datasets): a 260 kB file whose 16 values make HDF5 inflate a 256 MiB
# chunk (measured: 280 MB resident before the fix, whatever the cap).
with h5py.File(path("huge_chunk.h5"), "w") as f:
    d = f.create_dataset("psi", shape=(16,), maxshape=(None,), dtype=complex, chunks=(2 ** 24,), compression="gzip")
    d[:] = np.ones(16, dtype=complex)

# External raw storage pointing at the secret outside the folders.
size = os.path.getsize(secret)
with h5py.File(path("external_storage.h5"), "w") as f:
    f.create_dataset("psi", shape=(size // 16, 2), dtype="<f8", external=[(secret, 0, (size // 16) * 16)])

# An external link to a dataset in another HDF5 file outside.
with h5py.File(secret_h5, "w") as f:
    f["psi"] = np.arange(8, dtype=float) + 1j
with h5py.File(path("external_link.h5"), "w") as f:
    f["psi"] = h5py.ExternalLink(secret_h5, "/psi")
    f["grp"] = h5py.ExternalLink(secret_h5, "/")
    f["soft"] = h5py.SoftLink("/grp/psi")

# A virtual dataset whose source is the outside file.
layout = h5py.VirtualLayout(shape=(8,), dtype=complex)
layout[:] = h5py.VirtualSource(secret_h5, "psi", shape=(8,))
with h5py.File(path("virtual.h5"), "w") as f:
    f.create_virtual_dataset("psi", layout)

# A valid file cut short, and one with its superblock overwritten.
with open(path("plain.h5"), "rb") as f:
    whole = f.read()
with open(path("truncated.h5"), "wb") as f:
    f.write(whole[: len(whole) // 2])
with open(path("corrupt.h5"), "wb") as f:
    f.write(whole[:8] + bytes(64) + whole[72:])

# A psiflight-style item whose coordinate dataset is a link to the outside
# file: the item path must refuse it like a plain dataset.
with h5py.File(path("item_external_axis.h5"), "w") as f:
    g = f.create_group("wave")
    g["psi"] = np.ones(8, dtype=complex)
    g["x"] = h5py.ExternalLink(secret_h5, "/psi")

# Complex numbers padded to 4 kB per element: HDF5's conversion buffers
# would grow with the element size.
padded = np.dtype({"names": ["r", "i"], "formats": ["<f8", "<f8"], "offsets": [0, 8], "itemsize": 4096})
with h5py.File(path("padded_compound.h5"), "w") as f:
    f.create_dataset("psi", shape=(16,), dtype=padded)
