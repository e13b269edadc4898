//! AIMPAC wavefunction text from memory.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use sixray_fuzz::{accepted, check_finite, check_lines};
use sixray_parsers::parse_wfn;

fuzz_target!(|data: &[u8]| {
    let src = Path::new("fuzz.wfn");
    let Some(w) = accepted(parse_wfn(data, src), |e| e.line, src, data) else { return };
    // One centre, type and exponent per primitive, one coefficient per primitive in every
    // orbital, finite numbers, nucleus and orbital lines in file order after the header.
    let n = w.exponents.len();
    assert_eq!((w.centres.len(), w.types.len()), (n, n));
    check_finite(&w.exponents, "an exponent");
    check_lines(w.nuclei.iter().map(|a| a.line).chain(w.orbitals.iter().map(|o| o.line)), data, true, "nuclei and orbitals");
    assert!(w.nuclei.iter().all(|a| a.line >= 3));
    for a in &w.nuclei {
        check_finite(a.position.iter().chain([&a.charge]), "a nucleus");
    }
    for o in &w.orbitals {
        assert_eq!(o.coefficients.len(), n);
        check_finite(o.coefficients.iter().chain([&o.occupation, &o.energy]), "an orbital");
    }
    check_finite(w.energy.iter().chain(&w.virial), "the energy line");
});
