//! Checkpoints continue a run bit for bit, and are written atomically.
//!
//! Claims under test, from the doc comments of `io::checkpoint` ("Floats are stored as their
//! bits, so a continued run is bit-for-bit the run that was saved"; "Writes atomically: to a
//! temporary file beside `path`, flushed to disk, then renamed over it, so an interrupted write
//! leaves the previous checkpoint intact") and of the `resume` subcommand in `src/main.rs`
//! ("Continue a run from a checkpoint, bit for bit as if it had never stopped").
//!
//! The atomic-replace pattern (write a temporary file in the same folder, fsync, rename(2) over
//! the target) relies on rename being atomic within one file system: POSIX.1-2017, rename().
//!
//! Spec values (ρ, T, dt, r_c) are a common-practice liquid state point, chosen only to give a
//! moving dense system; the argon setup is the project's own example (`assets/`) made smaller.

mod common;
use noblescope::io::Setup;
use noblescope::io::checkpoint::{Checkpoint, write_atomically};
use noblescope::physics::{Observables, Simulation};
use std::path::{Path, PathBuf};
use std::process::Command;

fn setup_text(ensemble: &str, atoms: u64, steps: u64) -> String {
    format!(
        "Setup(
    title: \"checkpoint test\",
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: {atoms},
    density: Reduced(0.8),
    temperature: Reduced(1.1),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    skin: Sigma(0.3),
    potential: TruncatedShifted,
    tail_correction: true,
    ensemble: {ensemble},
    seed: 11,
    steps: {steps},
    equilibration_steps: 0,
    sample_every: 10,
)"
    )
}

const ENSEMBLES: [(&str, &str); 3] = [
    ("NVE", "Nve"),
    (
        "stochastic rescale",
        "Nvt(thermostat: StochasticRescale(relaxation: Reduced(0.1)))",
    ),
    ("Langevin", "Nvt(thermostat: Langevin(friction: Reduced(2.0)))"),
];

fn bits(o: &Observables) -> [u64; 9] {
    common::observable_bits(o)
}

fn steps(sim: &mut Simulation, n: u64, out: &mut Vec<[u64; 9]>) {
    for _ in 0..n {
        sim.step().unwrap();
        out.push(bits(&sim.observe()));
    }
}

fn bits3(v: &[[f64; 3]]) -> Vec<[u64; 3]> {
    v.iter()
        .map(|x| [x[0].to_bits(), x[1].to_bits(), x[2].to_bits()])
        .collect()
}

// ---------------------------------------------------------------------------------------------
// (a) library level
// ---------------------------------------------------------------------------------------------

#[test]
fn library_checkpoint_continues_bit_for_bit() {
    for (name, ensemble) in ENSEMBLES {
        let setup = Setup::parse(&setup_text(ensemble, 500, 600), "test.ron").unwrap();
        let spec = setup.resolve().unwrap();

        let mut a = Simulation::new(spec.clone()).unwrap();
        let mut trace_a = Vec::new();
        steps(&mut a, 600, &mut trace_a);

        let mut b = Simulation::new(spec.clone()).unwrap();
        let mut trace_b = Vec::new();
        steps(&mut b, 300, &mut trace_b);
        let saved = Checkpoint {
            setup: setup.clone(),
            spec: b.spec().clone(),
            state: b.state(),
            samples: None,
        };
        let bytes = saved.to_bytes();
        drop(b);
        let c = Checkpoint::from_bytes(&bytes, "memory").unwrap();
        assert_eq!(c, saved, "{name}: decode(encode(checkpoint)) differs");
        let mut b = Simulation::from_state(c.spec, c.state).unwrap();
        // The first observation after restoring must already be the saved step's.
        assert_eq!(
            bits(&b.observe()),
            trace_a[299],
            "{name}: observables right after restoring"
        );
        steps(&mut b, 300, &mut trace_b);

        assert!(
            a.list_builds() > 2,
            "{name}: list never rebuilt, the test would miss list state"
        );
        if let Some(k) = (0..600).find(|&k| trace_a[k] != trace_b[k]) {
            panic!(
                "{name}: step {} differs after continuing from a checkpoint: {:?} vs {:?}",
                k + 1,
                trace_a[k],
                trace_b[k]
            );
        }
        assert_eq!(
            bits3(&a.system().positions),
            bits3(&b.system().positions),
            "{name}: positions"
        );
        assert_eq!(
            bits3(&a.system().velocities),
            bits3(&b.system().velocities),
            "{name}: velocities"
        );
        assert_eq!(a.list_builds(), b.list_builds(), "{name}: list builds");
    }
}

// ---------------------------------------------------------------------------------------------
// (b) command line
// ---------------------------------------------------------------------------------------------

fn scratch(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("checkpoint-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn cli(args: &[&str]) {
    let out = Command::new(env!("CARGO_BIN_EXE_noblescope"))
        .args(args)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "noblescope {args:?} failed ({:?}):\nstdout: {}\nstderr: {}",
        out.status,
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
}

/// An argon setup (real units, so energy.csv carries the SI columns too).
fn argon_setup(ensemble: &str, steps: u64) -> String {
    format!(
        "// small version of assets/argon-cold-trap.ron
Setup(
    title: \"resume test\",
    species: [(kind: Argon, share: 1.0)],
    atoms: 500,
    density: GramsPerCubicCentimetre(1.40),
    temperature: Kelvin(90.0),
    timestep: Femtoseconds(5.0),
    cutoff: Sigma(2.5),
    ensemble: {ensemble},
    seed: 3,
    steps: {steps},
    equilibration_steps: 100,
    sample_every: 10,
)"
    )
}

#[test]
fn cli_resume_continues_the_energy_log_byte_for_byte() {
    for (name, ensemble) in [
        (
            "rescale",
            "Nvt(thermostat: StochasticRescale(relaxation: Femtoseconds(200.0)))",
        ),
        (
            "langevin",
            "Nvt(thermostat: Langevin(friction: PerPicosecond(5.0)))",
        ),
    ] {
        let dir = scratch(&format!("cli-{name}"));
        let setup = dir.join("argon.ron");
        std::fs::write(&setup, argon_setup(ensemble, 400)).unwrap();
        let s = |p: &Path| p.to_str().unwrap().to_owned();
        let (whole, first, second) = (dir.join("whole"), dir.join("first"), dir.join("second"));
        cli(&["run", &s(&setup), "--out", &s(&whole), "--quiet"]);
        cli(&[
            "run",
            &s(&setup),
            "--steps",
            "200",
            "--out",
            &s(&first),
            "--quiet",
        ]);
        // No --steps: runs to the setup's 400.
        cli(&[
            "resume",
            &s(&first.join("final.checkpoint")),
            "--out",
            &s(&second),
            "--quiet",
        ]);

        let read = |p: PathBuf| std::fs::read_to_string(p).unwrap();
        let whole_csv = read(whole.join("energy.csv"));
        let first_csv = read(first.join("energy.csv"));
        let second_csv = read(second.join("energy.csv"));
        let header = whole_csv.lines().next().unwrap();
        assert!(
            header.contains("[K]"),
            "{name}: argon log has no SI columns: {header}"
        );
        assert_eq!(
            first_csv.lines().next(),
            Some(header),
            "{name}: first part header"
        );
        assert_eq!(
            second_csv.lines().next(),
            Some(header),
            "{name}: resumed part header"
        );
        let mut joined: Vec<&str> = first_csv.lines().collect();
        joined.extend(second_csv.lines().skip(1));
        let whole_rows: Vec<&str> = whole_csv.lines().collect();
        // Samples at steps 0, 10, …, 400 and a header.
        assert_eq!(whole_rows.len(), 1 + 41, "{name}: rows in the uninterrupted log");
        for (k, (a, b)) in whole_rows.iter().zip(&joined).enumerate() {
            assert_eq!(a, b, "{name}: energy.csv line {} differs", k + 1);
        }
        assert_eq!(whole_rows.len(), joined.len(), "{name}: row counts");
        // The final checkpoints hold the same state too.
        let ca = Checkpoint::load(&whole.join("final.checkpoint")).unwrap();
        let cb = Checkpoint::load(&second.join("final.checkpoint")).unwrap();
        assert_eq!(ca.state, cb.state, "{name}: final states");
        let _ = std::fs::remove_dir_all(&dir);
    }
}

// ---------------------------------------------------------------------------------------------
// (c) atomic writes and damaged files
// ---------------------------------------------------------------------------------------------

fn small_checkpoint(steps_to_run: u64) -> Checkpoint {
    let setup = Setup::parse(&setup_text("Nve", 256, 100), "test.ron").unwrap();
    let spec = setup.resolve().unwrap();
    let mut sim = Simulation::new(spec).unwrap();
    sim.run(steps_to_run).unwrap();
    Checkpoint {
        setup,
        spec: sim.spec().clone(),
        state: sim.state(),
        samples: None,
    }
}

/// Files in `dir` other than `keep`.
fn leftovers(dir: &Path, keep: &[&str]) -> Vec<String> {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| !keep.contains(&n.as_str()))
        .collect()
}

#[test]
fn saving_over_an_existing_checkpoint_leaves_the_new_one() {
    let dir = scratch("overwrite");
    let path = dir.join("run.checkpoint");
    let (old, new) = (small_checkpoint(5), small_checkpoint(20));
    old.save(&path).unwrap();
    assert_eq!(Checkpoint::load(&path).unwrap(), old);
    new.save(&path).unwrap();
    assert_eq!(Checkpoint::load(&path).unwrap(), new);
    assert_eq!(
        leftovers(&dir, &["run.checkpoint"]),
        Vec::<String>::new(),
        "temporary files left behind"
    );
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn truncated_or_changed_checkpoints_are_rejected_with_an_error() {
    let bytes = small_checkpoint(3).to_bytes();
    // Every truncation length on a coarse grid, plus the last few bytes one by one.
    let mut cuts: Vec<usize> = (0..bytes.len()).step_by(97).collect();
    cuts.extend(bytes.len() - 16..bytes.len());
    for cut in cuts {
        let r = std::panic::catch_unwind(|| Checkpoint::from_bytes(&bytes[..cut], "cut.checkpoint"));
        match r {
            Ok(Err(e)) => assert!(
                e.to_string().contains("cut.checkpoint"),
                "error does not name the file: {e}"
            ),
            Ok(Ok(_)) => panic!(
                "a checkpoint truncated to {cut} of {} bytes was accepted",
                bytes.len()
            ),
            Err(_) => panic!("a checkpoint truncated to {cut} bytes made the decoder panic"),
        }
    }
    // One flipped bit anywhere (sampled positions, including header, arrays and checksum).
    for at in (0..bytes.len()).step_by(61).chain([bytes.len() - 1]) {
        let mut b = bytes.clone();
        b[at] ^= 0x10;
        match std::panic::catch_unwind(|| Checkpoint::from_bytes(&b, "flip.checkpoint")) {
            Ok(Err(_)) => {}
            Ok(Ok(_)) => panic!("a checkpoint with byte {at} changed was accepted"),
            Err(_) => panic!("a checkpoint with byte {at} changed made the decoder panic"),
        }
    }
    // Through the file API too, and a file that is not a checkpoint at all.
    let dir = scratch("damaged");
    let p = dir.join("half.checkpoint");
    std::fs::write(&p, &bytes[..bytes.len() / 2]).unwrap();
    assert!(Checkpoint::load(&p).is_err());
    std::fs::write(&p, b"Setup(title: \"not a checkpoint\")").unwrap();
    assert!(Checkpoint::load(&p).is_err());
    assert!(Checkpoint::load(&dir.join("missing.checkpoint")).is_err());
    let _ = std::fs::remove_dir_all(&dir);
}

/// FNV-1a 64 (Fowler, Noll & Vo; parameters from the published FNV reference, as in the
/// checkpoint format doc) — to forge a checksum-valid file with a damaged header.
fn fnv1a(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= b as u64;
        h = h.wrapping_mul(0x0100_0000_01b3);
    }
    h
}

/// A file whose checksum is right but whose header length field is absurd (e.g. written by a
/// buggy tool, or damaged before the checksum was computed) must still give an error.
#[test]
fn checksum_valid_checkpoint_with_absurd_header_length_is_an_error_not_a_panic() {
    let good = small_checkpoint(1).to_bytes();
    let magic_len = b"NOBLESCOPE-STATE 3\n".len();
    assert_eq!(&good[..magic_len], b"NOBLESCOPE-STATE 3\n");
    for hlen in [u64::MAX - 5, u64::MAX, (good.len() as u64) * 2, 0] {
        let mut b = good[..good.len() - 8].to_vec();
        b[magic_len..magic_len + 8].copy_from_slice(&hlen.to_le_bytes());
        let sum = fnv1a(&b);
        b.extend_from_slice(&sum.to_le_bytes());
        match std::panic::catch_unwind(|| Checkpoint::from_bytes(&b, "forged.checkpoint")) {
            Ok(Err(_)) => {}
            Ok(Ok(_)) => panic!("header length {hlen}: accepted"),
            Err(_) => panic!("header length {hlen}: the decoder panicked instead of returning an error"),
        }
    }
}

#[test]
fn failed_write_leaves_the_previous_checkpoint_intact() {
    let dir = scratch("failed-write");
    let path = dir.join("run.checkpoint");
    let (old, new) = (small_checkpoint(5), small_checkpoint(20));
    old.save(&path).unwrap();
    let before = std::fs::read(&path).unwrap();

    // 1. Target in a folder that does not exist: an error, and nothing is created.
    let missing = dir.join("no-such-folder").join("run.checkpoint");
    assert!(new.save(&missing).is_err());
    assert!(!dir.join("no-such-folder").exists());

    // 2. The temporary file cannot be created beside the target. As root a read-only folder does
    //    not stop writes, so the temporary name `save` uses (`.<name>.partial-<pid>`, see
    //    `write_atomically`) is taken by a folder instead; creating the file then fails.
    let blocker = dir.join(format!(".run.checkpoint.partial-{}", std::process::id()));
    std::fs::create_dir(&blocker).unwrap();
    std::fs::write(blocker.join("occupied"), b"x").unwrap();
    let r = new.save(&path);
    assert!(
        r.is_err(),
        "save succeeded although its temporary file could not be created"
    );
    assert!(
        r.unwrap_err().to_string().contains("run.checkpoint"),
        "error does not name the file"
    );
    assert_eq!(
        std::fs::read(&path).unwrap(),
        before,
        "the previous checkpoint was changed"
    );
    assert_eq!(Checkpoint::load(&path).unwrap(), old);
    std::fs::remove_dir_all(&blocker).unwrap();

    // 3. A read-only folder, where permissions are enforced (not for root).
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let ro = dir.join("read-only");
        std::fs::create_dir(&ro).unwrap();
        let p = ro.join("run.checkpoint");
        old.save(&p).unwrap();
        std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o555)).unwrap();
        let enforced = std::fs::File::create(ro.join("probe")).is_err();
        let r = new.save(&p);
        std::fs::set_permissions(&ro, std::fs::Permissions::from_mode(0o755)).unwrap();
        if enforced {
            assert!(r.is_err(), "save into a read-only folder reported success");
            assert_eq!(
                Checkpoint::load(&p).unwrap(),
                old,
                "the previous checkpoint was changed"
            );
        } else {
            // Permissions not enforced (running as root): the save may succeed; it must then be whole.
            assert!(r.is_ok());
            assert_eq!(Checkpoint::load(&p).unwrap(), new);
        }
    }
    assert_eq!(
        leftovers(&dir, &["run.checkpoint", "read-only"]),
        Vec::<String>::new(),
        "temporary files left behind"
    );

    // write_atomically itself: replacing works and leaves no temporary file.
    write_atomically(&path, &new.to_bytes()).unwrap();
    assert_eq!(Checkpoint::load(&path).unwrap(), new);
    let _ = std::fs::remove_dir_all(&dir);
}

/// The scalars kept in the checkpoint's JSON header (time, heat, drift reference, and every
/// float of the spec) must come back with the same bits, or a resumed run drifts from the
/// uninterrupted one. Values: pseudo-random doubles over many magnitudes (invented data,
/// 64-bit LCG with Knuth's MMIX constants).
#[test]
fn header_scalars_round_trip_bit_for_bit() {
    let base = small_checkpoint(2);
    let mut s: u64 = 12345;
    let mut next = || {
        s = s
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        s
    };
    let mut failures = Vec::new();
    for _ in 0..3000 {
        let mut c = base.clone();
        // Mantissa random, exponent within ±2^20: the range heat and energies live in.
        let mut value = || {
            f64::from_bits((next() >> 12) | ((1023 + (next() % 41) - 20) << 52))
                * if next() & 1 == 0 { 1.0 } else { -1.0 }
        };
        c.state.heat = value();
        c.state.drift_origin = value();
        c.state.time = value().abs();
        c.spec.timestep = value().abs();
        let back = Checkpoint::from_bytes(&c.to_bytes(), "memory").unwrap();
        for (field, a, b) in [
            ("state.heat", c.state.heat, back.state.heat),
            (
                "state.drift_origin",
                c.state.drift_origin,
                back.state.drift_origin,
            ),
            ("state.time", c.state.time, back.state.time),
            ("spec.timestep", c.spec.timestep, back.spec.timestep),
        ] {
            if a.to_bits() != b.to_bits() {
                failures.push(format!("{field}: {a:e} came back as {b:e}"));
            }
        }
    }
    assert!(
        failures.is_empty(),
        "{} of 12000 header floats changed in a checkpoint round trip, e.g. {:?}",
        failures.len(),
        &failures[..failures.len().min(4)]
    );
}
