//! Fuzzing the setup reader with property tests over structured mutations of the bundled setups.
//!
//! A setup file is the first thing a user hands the program, typed by hand or made by a
//! script, so every text must end in a setup or in an error that names where or what is wrong;
//! nothing may panic, and a setup that validates must survive being written and read back.
//!
//! Mutations (proptest 1.x strategies, seeded by proptest; failures are shrunk and kept in
//! `tests/setup_fuzz.proptest-regressions`):
//! - byte edits: delete, duplicate or replace a character at any position (tokeniser and
//!   error-position paths);
//! - number swaps: any number in the text replaced by an extreme or malformed one (0, −1,
//!   1e308, 1e-320, NaN, inf, 2⁶⁴, 1e400, …) (validation paths);
//! - field drops and duplicates: a whole `name: value,` line removed or repeated;
//! - variant swaps: a unit or mode name replaced by another one the schema knows.
//!
//! Properties:
//! - `Setup::parse` returns, never panics; a parse error carries a line and column inside the
//!   text (line ≥ 1);
//! - for a parsed setup, `resolve` returns, never panics, and a range error names a field and
//!   the allowed range;
//! - a setup that resolves writes back to RON that parses to the same setup (compared as RON
//!   text, so NaN cannot make equal setups look different) and resolves to the same spec;
//! - `cautions` never panics.
//!
//! Cost: 1,500 cases per property by default (a few seconds in release); set PROPTEST_CASES
//! to fuzz longer by hand, e.g. `PROPTEST_CASES=200000 cargo test --release --test setup_fuzz`.

use noblescope::io::Setup;
use noblescope::io::setup::SetupError;
use proptest::prelude::*;
use proptest::test_runner::Config;

const BUNDLED: [&str; 6] = [
    include_str!("../assets/argon-cold-trap.ron"),
    include_str!("../assets/krypton-getter-sample.ron"),
    include_str!("../assets/krypton-xenon-blend.ron"),
    include_str!("../assets/neon-cryostat-vapour.ron"),
    include_str!("../assets/reduced-liquid-32k.ron"),
    include_str!("../assets/reduced-lj-timestep-check.ron"),
];

/// Numbers that sit at or beyond the edges of what the schema and f64/u64 can hold.
const EXTREME_NUMBERS: [&str; 16] = [
    "0",
    "0.0",
    "-1",
    "-0.0",
    "1e308",
    "1e-320",
    "NaN",
    "inf",
    "-inf",
    "18446744073709551616",
    "18446744073709551615",
    "1e400",
    "4294967296",
    "1e-6",
    "999999999999",
    "0.1e",
];

/// Names the schema knows, swapped for one another.
const VARIANTS: [&str; 20] = [
    "Kelvin",
    "Reduced",
    "Femtoseconds",
    "Picoseconds",
    "Sigma",
    "Angstrom",
    "GramsPerCubicCentimetre",
    "KilogramsPerCubicMetre",
    "PerCubicNanometre",
    "PerPicosecond",
    "Truncated",
    "TruncatedShifted",
    "ShiftedForce",
    "Nve",
    "Nvt",
    "StochasticRescale",
    "Langevin",
    "Argon",
    "ReducedLJ",
    "Xenon",
];

fn cases() -> u32 {
    std::env::var("PROPTEST_CASES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(1500)
}

/// Byte ranges of the numbers in `text` (digits with sign, point and exponent).
fn number_spans(text: &str) -> Vec<(usize, usize)> {
    let b = text.as_bytes();
    let mut spans = Vec::new();
    let mut i = 0;
    while i < b.len() {
        let starts =
            b[i].is_ascii_digit() && (i == 0 || !(b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_'));
        if starts {
            let start = if i > 0 && b[i - 1] == b'-' { i - 1 } else { i };
            let mut j = i;
            while j < b.len() && (b[j].is_ascii_digit() || matches!(b[j], b'.' | b'e' | b'E' | b'_' | b'-')) {
                j += 1;
            }
            spans.push((start, j));
            i = j;
        } else {
            i += 1;
        }
    }
    spans
}

/// One mutation of `text`, chosen by `kind` and placed by `at`/`pick`.
fn mutate(text: &str, kind: u8, at: usize, pick: usize) -> String {
    let chars: Vec<char> = text.chars().collect();
    let pos = at % chars.len().max(1);
    match kind % 6 {
        0 => chars
            .iter()
            .enumerate()
            .filter(|&(i, _)| i != pos)
            .map(|(_, c)| c)
            .collect(),
        1 => {
            let mut out: Vec<char> = chars.clone();
            out.insert(pos, chars[pos]);
            out.into_iter().collect()
        }
        2 => {
            let mut out = chars.clone();
            out[pos] = b"(),:[]\"0e.-_ aZ\n"[pick % 16] as char;
            out.into_iter().collect()
        }
        3 => {
            let spans = number_spans(text);
            if spans.is_empty() {
                return text.to_string();
            }
            let (s, e) = spans[at % spans.len()];
            format!(
                "{}{}{}",
                &text[..s],
                EXTREME_NUMBERS[pick % EXTREME_NUMBERS.len()],
                &text[e..]
            )
        }
        4 => {
            let lines: Vec<&str> = text.lines().collect();
            let i = at % lines.len().max(1);
            let mut out: Vec<&str> = lines.clone();
            if pick.is_multiple_of(2) {
                out.remove(i);
            } else {
                out.insert(i, lines[i]);
            }
            out.join("\n")
        }
        _ => {
            let found: Vec<(usize, &str)> = VARIANTS
                .iter()
                .flat_map(|v| text.match_indices(v).map(|(i, _)| (i, *v)).collect::<Vec<_>>())
                .collect();
            if found.is_empty() {
                return text.to_string();
            }
            let (i, v) = found[at % found.len()];
            let with = VARIANTS[pick % VARIANTS.len()];
            format!("{}{}{}", &text[..i], with, &text[i + v.len()..])
        }
    }
}

/// Checks every property on one text.
fn check(text: &str) -> Result<(), TestCaseError> {
    let setup = match Setup::parse(text, "fuzzed.ron") {
        Ok(s) => s,
        Err(SetupError::Parse { line, .. }) => {
            prop_assert!(line >= 1, "a parse error points at line {line}");
            return Ok(());
        }
        Err(e) => {
            return Err(TestCaseError::fail(format!(
                "parse returned a non-parse error: {e}"
            )));
        }
    };
    let _ = setup.cautions();
    match setup.resolve() {
        Ok(spec) => {
            let text2 = setup.to_ron();
            let again = Setup::parse(&text2, "written.ron")
                .map_err(|e| TestCaseError::fail(format!("written setup does not parse: {e}\n{text2}")))?;
            prop_assert_eq!(again.to_ron(), text2.clone());
            let spec2 = again
                .resolve()
                .map_err(|e| TestCaseError::fail(format!("written setup: {e}")))?;
            prop_assert_eq!(format!("{spec2:?}"), format!("{spec:?}"));
        }
        Err(SetupError::Field { field, allowed, .. }) => {
            prop_assert!(!field.is_empty(), "a range error names its field");
            prop_assert!(
                !allowed.is_empty(),
                "a range error for {field} says what is allowed"
            );
        }
        Err(e) => {
            return Err(TestCaseError::fail(format!(
                "resolve returned a non-field error: {e}"
            )));
        }
    }
    Ok(())
}

proptest! {
    #![proptest_config(Config { cases: cases(), ..Config::default() })]

    #[test]
    fn one_mutation_of_a_bundled_setup_never_panics_and_round_trips_when_valid(
        file in 0..BUNDLED.len(), kind in any::<u8>(), at in any::<usize>(), pick in any::<usize>()
    ) {
        check(&mutate(BUNDLED[file], kind, at, pick))?;
    }

    #[test]
    fn several_mutations_of_a_bundled_setup_never_panic(
        file in 0..BUNDLED.len(), edits in prop::collection::vec((any::<u8>(), any::<usize>(), any::<usize>()), 1..6)
    ) {
        let mut text = BUNDLED[file].to_string();
        for (kind, at, pick) in edits {
            text = mutate(&text, kind, at, pick);
        }
        check(&text)?;
    }

    #[test]
    fn arbitrary_text_never_panics_the_reader(text in "\\PC{0,300}") {
        check(&text)?;
        check(&format!("Setup({text})"))?;
    }
}

#[test]
fn every_bundled_setup_passes_the_properties_unmutated() {
    for text in BUNDLED {
        check(text).unwrap();
        assert!(Setup::parse(text, "bundled").unwrap().resolve().is_ok());
    }
}

#[test]
fn the_mutations_reach_parse_errors_range_errors_and_valid_setups() {
    // Guards the harness itself: mutations that only ever produced parse errors would leave
    // validation unfuzzed.
    let (mut parse, mut range, mut valid) = (0, 0, 0);
    for n in 0..3000usize {
        let text = mutate(BUNDLED[n % BUNDLED.len()], (n / 7) as u8, n * 7919, n * 104_729);
        match Setup::parse(&text, "m").map(|s| s.resolve()) {
            Err(_) => parse += 1,
            Ok(Err(_)) => range += 1,
            Ok(Ok(_)) => valid += 1,
        }
    }
    assert!(
        parse > 300 && range > 100 && valid > 100,
        "parse {parse}, range {range}, valid {valid}"
    );
}
