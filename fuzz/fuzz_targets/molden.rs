//! Molden text from memory.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use sixray_fuzz::{accepted, check_finite, check_lines};
use sixray_parsers::{MoldenFile, ShellType, parse_molden};

fuzz_target!(|data: &[u8]| {
    let src = Path::new("fuzz.molden");
    if let Some(m) = accepted(parse_molden(data, src), |e| e.line, src, data) {
        consistent(&m, data);
    }
});

/// Non-empty shells and orbitals, finite numbers, `sp` shells exactly those with a second
/// coefficient column, and every reported line a line of the input, in file order.
fn consistent(m: &MoldenFile, text: &[u8]) {
    check_lines([m.atoms_line], text, true, "[Atoms]");
    check_lines([m.gto_line], text, true, "[GTO]");
    check_lines(m.atoms.iter().map(|a| a.line), text, true, "atom lines");
    check_finite(m.atoms.iter().flat_map(|a| &a.position), "an atom position");
    check_lines(m.flags.iter().map(|f| f.1), text, true, "flag sections");
    check_lines(m.basis.iter().map(|a| a.line), text, true, "basis atoms");
    for s in m.basis.iter().flat_map(|a| &a.shells) {
        assert!(!s.primitives.is_empty());
        // Primitive k is on line `line + 1 + k`.
        check_lines([s.line, s.line + s.primitives.len()], text, true, "a shell and its primitives");
        check_finite(s.scale.iter(), "a shell scale");
        check_finite(s.primitives.iter().flat_map(|p| [&p.exponent, &p.coefficient]), "a primitive");
        check_finite(s.primitives.iter().filter_map(|p| p.coefficient_p.as_ref()), "a primitive");
        assert_eq!(s.shell_type == ShellType::Sp, s.primitives.iter().all(|p| p.coefficient_p.is_some()));
        assert!(s.primitives.iter().all(|p| p.coefficient_p.is_some()) || s.primitives.iter().all(|p| p.coefficient_p.is_none()));
    }
    check_lines(m.orbitals.iter().map(|o| o.line), text, true, "orbitals");
    for o in &m.orbitals {
        assert!(!o.coefficients.is_empty());
        assert_eq!(o.coefficients.len(), o.coefficient_lines.len());
        assert!(o.coefficients.iter().all(|&(i, _)| i >= 1));
        check_finite(o.coefficients.iter().map(|(_, v)| v), "a coefficient");
        check_finite(o.energy.iter().chain(&o.occupation), "an energy or occupation");
        check_lines(std::iter::once(o.line).chain(o.coefficient_lines.iter().copied()), text, false, "an orbital's lines");
        assert!(o.coefficient_resolution.is_finite() && o.coefficient_resolution >= 0.0);
    }
}
