"""Demo inputs for the Gaussian-basis path: molden files of small oxygen and sulfur hydrides.

A scenario of our own: the oxygen hydrides of the grid samples (water, hydroxide, hydroxyl
radical; lithium hydride beside them) and hydrogen sulfide, a second-row molecule on the exact
path. LDA (Slater + VWN) orbitals from PySCF 2.14 (libcint integrals, libxc 7.0.0), cc-pVDZ
(aug-cc-pVDZ for the anion). Oxygen species and lithium hydride: the geometries of
gen_samples.py in the shared tools (the same molecules as the bundled grid files). Hydrogen
sulfide: S-H 1.336 Angstrom and H-S-H 92.1 degrees, as the shared gen_heavy.py has it.

Writes OUTDIR/<name>.molden.gz (pyscf.tools.molden.from_scf, gzip) and OUTDIR/reference.json:
per file and occupied spin-orbital (in the file's order: alpha then beta for open shells) the
exact Hartree self-energy J[n_i] = 1/2 (ii|ii), n_i = |phi_i|^2 (libcint), and the LSDA exchange
(libxc LDA_X, fully spin-polarised) on a level-8 unpruned Becke grid, in hartree, for the tests to
hold the demo's numbers against.

Not run by the tests (needs PySCF: pip install pyscf==2.14.0).
Usage: python tools/gen_basis_samples.py [OUTDIR]   (default: samples/basis)
"""
import gzip
import json
import os
import shutil
import sys

import numpy as np
from pyscf import dft, gto, scf
from pyscf.dft import libxc
from pyscf.tools import molden

HERE = os.path.dirname(os.path.abspath(__file__))


def bent(x, r, angle):
    """X-H2 in the yz plane, X at the origin: r in Angstrom, angle in degrees."""
    half = np.radians(angle) / 2.0
    y, z = r * np.sin(half), -r * np.cos(half)
    return f"{x} 0 0 0; H 0 {y:.6f} {z:.6f}; H 0 {-y:.6f} {z:.6f}"


SETS = {
    "water": dict(atom="O 0 0 0.1173; H 0 0.7572 -0.4692; H 0 -0.7572 -0.4692", basis="cc-pvdz", charge=0, spin=0),
    "hydroxide": dict(atom="O 0 0 0; H 0 0 0.964", basis="aug-cc-pvdz", charge=-1, spin=0),
    "hydroxyl_radical": dict(atom="O 0 0 0; H 0 0 0.970", basis="cc-pvdz", charge=0, spin=1),
    "lithium_hydride": dict(atom="Li 0 0 0; H 0 0 1.595", basis="cc-pvdz", charge=0, spin=0),
    "hydrogen_sulfide": dict(atom=bent("S", 1.336, 92.1), basis="cc-pvdz", charge=0, spin=0),
}


def self_energies(mol, coeff, occ):
    """J and LSDA exchange of every occupied orbital (columns of coeff with occ > 0)."""
    idx = [i for i in range(len(occ)) if occ[i] > 1e-8]
    dms = np.array([np.outer(coeff[:, i], coeff[:, i]) for i in idx])
    vj = scf.hf.get_jk(mol, dms, hermi=1, with_k=False)[0]
    grids = dft.gen_grid.Grids(mol)
    grids.level = 8
    grids.prune = None
    grids.build()
    ao = dft.numint.eval_ao(mol, grids.coords)
    rows = []
    for k, i in enumerate(idx):
        rho = (ao @ coeff[:, i]) ** 2
        exc = libxc.eval_xc("LDA_X", (rho, np.zeros_like(rho)), spin=1, deriv=0)[0]
        rows.append({
            "index": i + 1,
            "hartree_self": 0.5 * float(np.einsum("ij,ij", dms[k], vj[k])),
            "lsda_x": float(np.sum(grids.weights * rho * exc)),
        })
    return rows


def main(outdir):
    os.makedirs(outdir, exist_ok=True)
    ref = {
        "source": "PySCF 2.14.0: LDA (Slater + VWN) SCF orbitals; hartree_self from libcint integrals; lsda_x: libxc 7.0.0 "
                  "LDA_X of the fully spin-polarised orbital density on a level-8 unpruned Becke grid",
        "units": "hartree (Eh)",
        "files": {},
    }
    for name, spec in SETS.items():
        mol = gto.M(unit="Angstrom", verbose=0, **spec)
        mf = (dft.RKS if spec["spin"] == 0 else dft.UKS)(mol)
        mf.xc = "lda,vwn"
        mf.grids.level = 5
        mf.conv_tol = 1e-10
        mf.kernel()
        if not mf.converged:
            # Open shells' plain DIIS iterations can stall (the sulfanyl radical's did); second-order
            # iterations from where they stopped converge.
            start = mf.make_rdm1()
            mf = mf.newton()
            mf.kernel(start)
        assert mf.converged, name
        path = os.path.join(outdir, f"{name}.molden")
        molden.from_scf(mf, path)
        with open(path, "rb") as src, gzip.GzipFile(path + ".gz", "wb", compresslevel=9, mtime=0) as dst:
            shutil.copyfileobj(src, dst)
        os.remove(path)
        if spec["spin"] == 0:
            channels = [("restricted", mf.mo_coeff, mf.mo_occ)]
        else:
            channels = [("alpha", mf.mo_coeff[0], mf.mo_occ[0]), ("beta", mf.mo_coeff[1], mf.mo_occ[1])]
        orbitals = [dict(spin=spin, **row) for spin, c, occ in channels for row in self_energies(mol, c, occ)]
        ref["files"][f"{name}.molden.gz"] = {
            "geometry_angstrom": spec["atom"], "basis": spec["basis"], "charge": spec["charge"], "spin_2s": spec["spin"],
            "total_energy": float(mf.e_tot), "orbitals": orbitals,
        }
        print(name, mol.nao, len(orbitals), os.path.getsize(path + ".gz"), flush=True)
    with open(os.path.join(outdir, "reference.json"), "w") as fh:
        json.dump(ref, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "..", "samples", "basis"))
