//! Fuzzing the checkpoint reader with property tests over structured mutations of a real
//! checkpoint.
//!
//! A checkpoint comes back from disk, perhaps damaged, hand-edited or written by a newer
//! version; its checksum only proves that the bytes are the ones written. So whatever the bytes,
//! reading must end in an error or in a state that can be run: nothing may panic or abort, and
//! an accepted state is finite and steps without an alarm at once.
//!
//! Mutations (proptest 1.x; failures are shrunk and kept in
//! `tests/checkpoint_fuzz.proptest-regressions`):
//! - header numbers replaced by extreme or malformed ones (0, −1, 1e6, 1e200, NaN as text, …),
//!   with the header length and checksum fixed up so the mutation reaches validation;
//! - one f64 of the arrays (a position or velocity) replaced by an extreme bit pattern (NaN,
//!   ±inf, 1e200, the largest finite, a subnormal), checksum fixed up;
//! - one type byte replaced, checksum fixed up;
//! - raw byte flips and truncations without fix-up (the checksum must catch them).
//!
//! Layout (`io::checkpoint`): magic line, u64 header length, JSON header, types (u8 × N),
//! positions and velocities (f64 × 3N each), list reference (f32 × 3N), FNV-1a 64 checksum of
//! everything before it, all little-endian.

use noblescope::engine::{AlarmKind, Session};
use noblescope::io::Setup;
use noblescope::io::checkpoint::Checkpoint;
use proptest::prelude::*;
use proptest::test_runner::Config;
use std::sync::OnceLock;

const SETUP: &str = "Setup(
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 108,
    density: Reduced(0.8),
    temperature: Reduced(1.0),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.0),
    skin: Sigma(0.3),
    ensemble: Nvt(thermostat: Langevin(friction: Reduced(1.0))),
    steps: 1000,
)";
const MAGIC_LEN: usize = "NOBLESCOPE-STATE 3\n".len();

/// A checkpoint of a short run, as bytes.
fn original() -> &'static [u8] {
    static BYTES: OnceLock<Vec<u8>> = OnceLock::new();
    BYTES.get_or_init(|| {
        let mut s = Session::new(Setup::parse(SETUP, "fuzz.ron").unwrap()).unwrap();
        for _ in 0..20 {
            s.step();
        }
        s.checkpoint().to_bytes()
    })
}

fn fnv1a(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= b as u64;
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// Splits into (header JSON, arrays without checksum).
fn parts(bytes: &[u8]) -> (String, Vec<u8>) {
    let len = u64::from_le_bytes(bytes[MAGIC_LEN..MAGIC_LEN + 8].try_into().unwrap()) as usize;
    let start = MAGIC_LEN + 8;
    let header = String::from_utf8(bytes[start..start + len].to_vec()).unwrap();
    (header, bytes[start + len..bytes.len() - 8].to_vec())
}

/// Reassembles with a fresh header length and checksum.
fn assemble(header: &str, arrays: &[u8]) -> Vec<u8> {
    let mut out = original()[..MAGIC_LEN].to_vec();
    out.extend_from_slice(&(header.len() as u64).to_le_bytes());
    out.extend_from_slice(header.as_bytes());
    out.extend_from_slice(arrays);
    let sum = fnv1a(&out);
    out.extend_from_slice(&sum.to_le_bytes());
    out
}

const EXTREME_NUMBERS: [&str; 12] = [
    "0",
    "-1",
    "1e6",
    "1e200",
    "-1e200",
    "1e-300",
    "0.0",
    "2",
    "18446744073709551615",
    "1.5",
    "107",
    "109",
];
const EXTREME_BITS: [f64; 8] = [
    f64::NAN,
    f64::INFINITY,
    f64::NEG_INFINITY,
    1e200,
    f64::MAX,
    5e-324,
    -1e30,
    1e6,
];

/// Spans of the JSON numbers in the header, outside the embedded setup text.
fn header_numbers(header: &str) -> Vec<(usize, usize)> {
    let b = header.as_bytes();
    let mut spans = Vec::new();
    let mut i = 0;
    let mut in_string = false;
    while i < b.len() {
        match b[i] {
            b'"' if i == 0 || b[i - 1] != b'\\' => in_string = !in_string,
            c if !in_string && (c.is_ascii_digit() || c == b'-') => {
                let mut j = i + 1;
                while j < b.len()
                    && (b[j].is_ascii_digit() || matches!(b[j], b'.' | b'e' | b'E' | b'-' | b'+'))
                {
                    j += 1;
                }
                spans.push((i, j));
                i = j;
                continue;
            }
            _ => {}
        }
        i += 1;
    }
    spans
}

fn mutate(kind: u8, at: usize, pick: usize) -> Vec<u8> {
    let (header, mut arrays) = parts(original());
    let atoms = 108;
    match kind % 5 {
        0 => {
            let spans = header_numbers(&header);
            let (s, e) = spans[at % spans.len()];
            let h = format!(
                "{}{}{}",
                &header[..s],
                EXTREME_NUMBERS[pick % EXTREME_NUMBERS.len()],
                &header[e..]
            );
            assemble(&h, &arrays)
        }
        1 => {
            let k = atoms + 8 * (at % (6 * atoms));
            arrays[k..k + 8].copy_from_slice(&EXTREME_BITS[pick % EXTREME_BITS.len()].to_le_bytes());
            assemble(&header, &arrays)
        }
        2 => {
            arrays[at % atoms] = (pick % 256) as u8;
            assemble(&header, &arrays)
        }
        3 => {
            let mut raw = original().to_vec();
            let i = at % raw.len();
            raw[i] ^= 1 << (pick % 8);
            raw
        }
        _ => original()[..at % original().len()].to_vec(),
    }
}

fn check(bytes: &[u8]) -> Result<(), TestCaseError> {
    let Ok(c) = Checkpoint::from_bytes(bytes, "fuzzed.checkpoint") else {
        return Ok(());
    };
    let Ok(mut s) = Session::from_checkpoint(c) else {
        return Ok(());
    };
    let o = s.observe();
    prop_assert!(
        o.kinetic.is_finite() && o.potential.is_finite() && o.pressure.is_finite() && o.drift.is_finite(),
        "an accepted checkpoint gives a non-finite state: {o:?}"
    );
    // The drift reference is the checkpoint's own (any finite value is accepted), so an altered
    // one may be reported as drift: that is the watchdog comparing with it, not a broken state.
    for _ in 0..3 {
        let out = s.step();
        prop_assert!(
            out.alarm.as_ref().is_none_or(|a| a.kind == AlarmKind::Drift),
            "an accepted checkpoint raises an alarm at once: {:?}",
            out.alarm
        );
    }
    Ok(())
}

proptest! {
    #![proptest_config(Config {
        cases: std::env::var("PROPTEST_CASES").ok().and_then(|v| v.parse().ok()).unwrap_or(400),
        ..Config::default()
    })]

    #[test]
    fn a_mutated_checkpoint_is_refused_or_runs_never_panics(kind in any::<u8>(), at in any::<usize>(), pick in any::<usize>()) {
        check(&mutate(kind, at, pick))?;
    }
}

#[test]
fn the_unmutated_checkpoint_reads_back_and_runs() {
    let (header, arrays) = parts(original());
    assert_eq!(
        assemble(&header, &arrays),
        original(),
        "test bug: reassembly differs"
    );
    check(original()).unwrap();
    assert!(Checkpoint::from_bytes(original(), "x").is_ok());
}

#[test]
fn the_mutations_reach_the_checksum_the_validation_and_accepted_states() {
    // Guards the harness itself: mutations that never passed the checksum would leave the
    // field checks unfuzzed.
    let (mut unreadable, mut refused, mut accepted) = (0, 0, 0);
    for n in 0..2000usize {
        let bytes = mutate((n % 5) as u8, n * 7919, n * 104_729);
        match Checkpoint::from_bytes(&bytes, "m").map(Session::from_checkpoint) {
            Err(_) => unreadable += 1,
            Ok(Err(_)) => refused += 1,
            Ok(Ok(_)) => accepted += 1,
        }
    }
    assert!(
        unreadable > 200 && refused > 200 && accepted > 20,
        "{unreadable} {refused} {accepted}"
    );
}
