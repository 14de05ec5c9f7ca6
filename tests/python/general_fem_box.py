"""Comparison path for the box benchmark: lowest-order Nedelec eigenmodes of an empty PEC box with a general-purpose
Python FEM library (scikit-fem) and scipy's ARPACK shift-invert (SuperLU).
Prints DOFs, times, and the worst relative error of the modes found near the target
against the analytic box frequencies. Usage: python3 tests/python/general_fem_box.py N  (cells per 100 mm)"""
import sys, time, itertools
import numpy as np, scipy.sparse.linalg as sla
from skfem import MeshTet, ElementTetN0, Basis, BilinearForm
from skfem.helpers import dot, curl

C0 = 299792458.0
A, B, D = 0.30, 0.30, 0.20  # box (m)
TARGET = 2.45e9; NMODES = 20

def analytic(fmax):
    fs = []
    for m, n, p in itertools.product(range(0, 12), repeat=3):
        if (m == 0) + (n == 0) + (p == 0) > 1: continue
        f = C0 / 2 * np.sqrt((m / A) ** 2 + (n / B) ** 2 + (p / D) ** 2)
        if f > fmax: continue
        # TE and TM both exist when all indices are nonzero
        mult = 2 if (m and n and p) else 1
        fs += [f] * mult
    return np.sort(fs)

def main(nper):
    t0 = time.perf_counter()
    nx, ny, nz = int(A / 0.1 * nper), int(B / 0.1 * nper), int(D / 0.1 * nper)
    m = MeshTet.init_tensor(np.linspace(0, A, nx + 1), np.linspace(0, B, ny + 1), np.linspace(0, D, nz + 1))
    basis = Basis(m, ElementTetN0())
    @BilinearForm
    def kform(E, v, w): return dot(curl(E), curl(v))
    @BilinearForm
    def mform(E, v, w): return dot(E, v)
    K = kform.assemble(basis); M = mform.assemble(basis)
    free = basis.complement_dofs(basis.get_dofs())
    K = K[free][:, free].tocsc(); M = M[free][:, free].tocsc()
    t1 = time.perf_counter()
    sigma = (2 * np.pi * TARGET / C0) ** 2
    vals, _ = sla.eigsh(K, k=NMODES, M=M, sigma=sigma, which='LM')
    t2 = time.perf_counter()
    f = np.sort(np.sqrt(np.abs(vals)) * C0 / (2 * np.pi))
    ref = analytic(3.5e9)
    err = max(np.min(np.abs(ref - x)) / x for x in f)
    print(f"cells/100mm={nper} tets={m.t.shape[1]} dofs={K.shape[0]} assemble_s={t1-t0:.2f} eig_s={t2-t1:.2f} worst_rel_err={err:.2e} fmin={f[0]/1e9:.4f} fmax={f[-1]/1e9:.4f}GHz")

main(int(sys.argv[1]))
