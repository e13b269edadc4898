"""Benchmark input: CuH in cc-pVQZ (Cu carries h functions), RHF orbitals from PySCF 2.14.

Writes cuh_qz.molden.gz (the occupied orbitals only, to keep the file small) for the
exact-J benchmark in benches/basis.rs, and cuh_qz.json with each occupied orbital's exact
J[n_i] = 1/2 (ii|ii) from libcint integrals, which the benchmark prints its deviation from. The geometry is a plain choice of ours (Cu–H 1.46 Å along
z), not an optimised structure; the benchmark times the integrals, not the chemistry. The molden
file is written like tests/data/basis/generate_high_l.py writes high_l.molden (PySCF's
`header` with ignore_h=False, then the [MO] section in the format's spherical order m = 0, +1,
-1, ..., whose helper is imported from there).

Usage: /tmp/venv/bin/python benches/data/cuh_qz.py benches/data
"""
import gzip, json, os, sys
import numpy as np
from pyscf import gto, scf
from pyscf.tools import molden

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "tests", "data", "basis"))
from generate_high_l import molden_order  # noqa: E402


def main(outdir):
    mol = gto.M(atom="Cu 0 0 0; H 0 0 1.46", basis="cc-pvqz", unit="Angstrom", verbose=0)
    mf = scf.RHF(mol)
    mf.conv_tol = 1e-10
    mf.kernel()
    assert mf.converged
    occupied = np.where(mf.mo_occ > 0)[0]
    idx = molden_order(mol)
    with gzip.open(os.path.join(outdir, "cuh_qz.molden.gz"), "wt") as fh:
        molden.header(mol, fh, ignore_h=False)
        fh.write("[MO]\n")
        for i in occupied:
            fh.write(" Sym= A\n Ene= %15.10g\n Spin= Alpha\n Occup= %10.5f\n" % (mf.mo_energy[i], mf.mo_occ[i]))
            for k, j in enumerate(idx):
                fh.write(" %3d    %18.14g\n" % (k + 1, mf.mo_coeff[j, i]))
    js = []
    for i in occupied:
        d = np.outer(mf.mo_coeff[:, i], mf.mo_coeff[:, i])
        vj = scf.hf.get_jk(mol, d, with_k=False)[0]
        js.append(0.5 * float(np.einsum("ij,ij", d, vj)))
    with open(os.path.join(outdir, "cuh_qz.json"), "w") as fh:
        json.dump({"source": "PySCF 2.14.0, libcint integrals (benches/data/cuh_qz.py)", "units": "hartree (Eh)",
                   "e_rhf": mf.e_tot, "hartree_self": js}, fh, indent=1)
    print("E(RHF) = %.10f Eh, %d functions, %d occupied" % (mf.e_tot, mol.nao, len(occupied)))


if __name__ == "__main__":
    main(sys.argv[1])
