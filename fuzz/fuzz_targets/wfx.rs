//! AIM extended wavefunction text from memory.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use sixray_fuzz::{accepted, check_finite, check_lines};
use sixray_parsers::parse_wfx;

fuzz_target!(|data: &[u8]| {
    let src = Path::new("fuzz.wfx");
    let Some(w) = accepted(parse_wfx(data, src), |e| e.line, src, data) else { return };
    // One entry per nucleus in every nuclear list (names optional), one per primitive in
    // every primitive list and orbital, finite numbers, orbitals in file order.
    let nuclei = w.atomic_numbers.len();
    assert_eq!((w.nuclear_charges.len(), w.coordinates.len()), (nuclei, nuclei));
    assert!(w.nuclear_names.is_empty() || w.nuclear_names.len() == nuclei);
    let n = w.exponents.len();
    assert_eq!((w.centres.len(), w.types.len()), (n, n));
    check_finite(w.nuclear_charges.iter().chain(w.coordinates.iter().flatten()).chain(&w.exponents), "a nucleus or exponent");
    let scalars = [w.net_charge, w.electrons, w.alpha_electrons, w.beta_electrons, w.energy, w.virial];
    check_finite(scalars.iter().flatten(), "a scalar section");
    check_lines(w.orbitals.iter().map(|o| o.line), data, true, "orbitals");
    for o in &w.orbitals {
        assert_eq!(o.coefficients.len(), n);
        check_finite(o.coefficients.iter().chain([&o.occupation, &o.energy]), "an orbital");
    }
});
