//! Formatted checkpoint text from memory, and the typed look-ups on what it returns.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use sixray_fuzz::{accepted, check_error, check_finite, check_lines};
use sixray_parsers::{FchkValue, parse_fchk};

fuzz_target!(|data: &[u8]| {
    let src = Path::new("fuzz.fchk");
    let Some(f) = accepted(parse_fchk(data, src), |e| e.line, src, data) else { return };
    // Sections start after the title and calculation lines, in file order.
    check_lines(f.sections.iter().map(|s| s.line), data, true, "sections");
    assert!(f.sections.first().is_none_or(|s| s.line >= 3));
    for s in &f.sections {
        assert!(!s.name.is_empty() && s.name.len() <= 40 * 3, "section name {:?}", s.name);
        assert_eq!(s.name.trim_end(), s.name);
        match &s.value {
            FchkValue::Real(v) => check_finite([v], "a real scalar"),
            FchkValue::Reals(v) => check_finite(v, "a real array"),
            _ => {}
        }
        // Each look-up answers for the first section of the name: its value, or a type
        // error located at its header.
        let first = f.get(&s.name).expect("a listed name is found");
        let typed = [
            f.int(&s.name).map(|v| v.is_some()),
            f.real(&s.name).map(|v| v.is_some()),
            f.ints(&s.name).map(|v| v.is_some()),
            f.reals(&s.name).map(|v| v.is_some()),
        ];
        for answer in typed {
            match answer {
                Ok(found) => assert!(found),
                Err(e) => {
                    assert_eq!(e.line, Some(first.line));
                    check_error(src, e.line, &e, data);
                }
            }
        }
    }
});
