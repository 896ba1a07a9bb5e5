//! A checkpoint whose checksum matches is still checked as strictly as a setup file.
//!
//! Contract under test: `io::checkpoint_check` (the six checks listed in its module doc),
//! `physics::SimulationState::check` (with the bounds `MAX_SPEED`, `MAX_COORDINATE`,
//! `BOX_LENGTH_TOLERANCE`), `io::checkpoint::MAX_CHECKPOINT_BYTES`, and the exit codes of
//! `src/main.rs` (2 for bad input). Each corrupted checkpoint is made by the crate's own writer
//! (`Checkpoint::save`) after changing one thing, so its checksum is valid and only the check
//! can refuse it; `noblescope resume` must then exit 2, name the field, and create no output.
//!
//! The state point is a common-practice dense liquid (ρ* = 0.8, T* = 1.1), chosen only to give a
//! small valid run; the Langevin friction bound (at most one per timestep) is `Setup::resolve`'s.

mod command_line;
use command_line::noblescope;

use noblescope::io::Setup;
use noblescope::io::checkpoint::{Checkpoint, MAX_CHECKPOINT_BYTES};
use noblescope::physics::{Simulation, Species, Thermostat};
use std::path::{Path, PathBuf};

const ATOMS: usize = 256;
const STEPS: u64 = 100;
/// Timestep of the setup below, in τ.
const DT: f64 = 0.005;

fn setup_text(ensemble: &str) -> String {
    format!(
        "Setup(
    title: \"checkpoint check test\",
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: {ATOMS},
    density: Reduced(0.8),
    temperature: Reduced(1.1),
    timestep: Reduced({DT}),
    cutoff: Sigma(2.5),
    skin: Sigma(0.3),
    ensemble: {ensemble},
    seed: 5,
    steps: {STEPS},
    sample_every: 10,
)"
    )
}

/// A valid checkpoint after 20 steps.
fn checkpoint(ensemble: &str) -> Checkpoint {
    let setup = Setup::parse(&setup_text(ensemble), "test.ron").unwrap();
    let mut sim = Simulation::new(setup.resolve().unwrap()).unwrap();
    sim.run(20).unwrap();
    Checkpoint {
        setup,
        spec: sim.spec().clone(),
        state: sim.state(),
        samples: None,
    }
}

fn nve() -> Checkpoint {
    checkpoint("Nve")
}

/// Saves `c` with the crate's writer, resumes it, and checks exit code 2, `field` named in the
/// error, no panic and no output folder.
fn resume_refuses(name: &str, c: &Checkpoint, field: &str) {
    let dir = scratch(name);
    let path = dir.join("bad.checkpoint");
    c.save(&path).unwrap();
    let out = dir.join("out");
    let o = noblescope(&[
        "resume",
        path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ]);
    let stderr = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{name}: exit {:?}\n{stderr}", o.status);
    assert!(!stderr.contains("panicked"), "{name}: panicked: {stderr}");
    assert!(
        stderr.contains(&format!("{field}: ")) && stderr.contains("allowed: "),
        "{name}: the error does not name {field:?} and its range:\n{stderr}"
    );
    assert!(!out.exists(), "{name}: an output folder was created");
    // The library refuses it the same way, naming the same field.
    let e = Checkpoint::load(&path).unwrap_err().to_string();
    assert!(e.contains(&format!("{field}: ")), "{name}: load: {e}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn an_unchanged_checkpoint_passes_the_check_and_resumes() {
    for ensemble in ["Nve", "Nvt(thermostat: Langevin(friction: Reduced(2.0)))"] {
        let c = checkpoint(ensemble);
        c.check().unwrap();
        let dir = scratch("good");
        let path = dir.join("good.checkpoint");
        c.save(&path).unwrap();
        let out = dir.join("out");
        let o = noblescope(&[
            "resume",
            path.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
            "--quiet",
        ]);
        assert_eq!(
            o.status.code(),
            Some(0),
            "{ensemble}: {}",
            String::from_utf8_lossy(&o.stderr)
        );
        let _ = std::fs::remove_dir_all(&dir);
    }
}

#[test]
fn a_box_length_that_disagrees_with_atoms_and_density_is_refused() {
    let mut c = nve();
    c.state.box_length = 1e6;
    resume_refuses("box", &c, "checkpoint.box_length");
    // Within the stated tolerance (relative 1e-9) is accepted; just outside it is not.
    let l = c.spec.box_length();
    c.state.box_length = l * (1.0 + 0.5e-9);
    c.check().unwrap();
    c.state.box_length = l * (1.0 + 2e-9);
    assert_eq!(c.check().unwrap_err().field_name(), Some("checkpoint.box_length"));
}

#[test]
fn huge_or_non_finite_velocities_are_refused_naming_the_atom() {
    let mut c = nve();
    c.state.velocities[17][0] = 1e200;
    resume_refuses("fast", &c, "checkpoint.velocities[17]");
    let mut c = nve();
    c.state.velocities[3][2] = f64::NAN;
    resume_refuses("nan-velocity", &c, "checkpoint.velocities[3]");
    // The bound is MAX_SPEED, inclusive.
    let mut c = nve();
    c.state.velocities[0][1] = -noblescope::physics::simulation::MAX_SPEED;
    c.check().unwrap();
}

#[test]
fn non_finite_positions_and_list_references_are_refused_naming_the_atom() {
    let mut c = nve();
    c.state.positions[5][1] = f64::INFINITY;
    resume_refuses("inf-position", &c, "checkpoint.positions[5]");
    let mut c = nve();
    c.state.positions[6][0] = 1e20;
    resume_refuses("far-position", &c, "checkpoint.positions[6]");
    let mut c = nve();
    c.state.list_reference[9][2] = f32::NAN;
    resume_refuses("nan-reference", &c, "checkpoint.list_reference[9]");
    let mut c = nve();
    c.state.list_reference[10][0] = -1.0;
    resume_refuses("unfolded-reference", &c, "checkpoint.list_reference[10]");
}

#[test]
fn an_atom_farther_than_half_the_skin_from_its_list_reference_is_refused() {
    // The list would be rebuilt from a reference the atom has left: pairs could be missing.
    let mut c = nve();
    let skin = c.spec.skin;
    c.state.positions[12][0] += 1.2 * skin;
    resume_refuses("moved", &c, "checkpoint.list_reference[12]");
}

#[test]
fn a_zero_or_non_finite_drift_scale_heat_or_time_is_refused() {
    for (name, change, field) in [
        (
            "zero-drift-scale",
            (|c: &mut Checkpoint| c.state.drift_scale = 0.0) as fn(&mut Checkpoint),
            "checkpoint.drift_scale",
        ),
        // JSON has no NaN or infinity: the header stores them as null, named when read.
        (
            "nan-drift-scale",
            |c| c.state.drift_scale = f64::NAN,
            "checkpoint.drift_scale",
        ),
        (
            "negative-drift-scale",
            |c| c.state.drift_scale = -1.0,
            "checkpoint.drift_scale",
        ),
        ("inf-heat", |c| c.state.heat = f64::INFINITY, "checkpoint.heat"),
        (
            "nan-origin",
            |c| c.state.drift_origin = f64::NAN,
            "checkpoint.drift_origin",
        ),
        ("negative-time", |c| c.state.time = -1.0, "checkpoint.time"),
    ] {
        let mut c = nve();
        change(&mut c);
        resume_refuses(name, &c, field);
    }
}

#[test]
fn types_beyond_the_species_or_counts_unlike_the_spec_are_refused() {
    let mut c = nve();
    c.state.types[2] = 7;
    resume_refuses("type", &c, "checkpoint.types[2]");
}

#[test]
fn a_spec_whose_species_counts_density_or_seed_disagree_with_the_setup_is_refused() {
    let mut c = nve();
    c.spec.kinds = vec![Species::Argon];
    resume_refuses("kinds", &c, "checkpoint.spec.kinds");
    // A state and spec of 255 atoms under a setup of 256.
    let mut c = nve();
    c.spec.counts = vec![ATOMS - 1];
    c.state.positions.pop();
    c.state.velocities.pop();
    c.state.types.pop();
    c.state.list_reference.pop();
    resume_refuses("counts", &c, "checkpoint.spec.counts");
    // The arrays shorter than the spec says.
    let mut c = nve();
    c.state.velocities.pop();
    c.state.positions.pop();
    c.state.types.pop();
    c.state.list_reference.pop();
    resume_refuses("short", &c, "checkpoint.positions");
    let mut c = nve();
    c.spec.density *= 1.01;
    resume_refuses("density", &c, "checkpoint.spec.density");
    let mut c = nve();
    c.spec.seed += 1;
    resume_refuses("seed", &c, "checkpoint.spec.seed");
}

#[test]
fn a_step_beyond_the_setups_steps_is_refused() {
    let mut c = nve();
    c.state.step = STEPS + 1;
    resume_refuses("step", &c, "checkpoint.step");
}

#[test]
fn live_values_outside_a_setups_ranges_are_refused() {
    // A friction above one per timestep.
    let mut c = checkpoint("Nvt(thermostat: Langevin(friction: Reduced(2.0)))");
    c.spec.thermostat = Thermostat::Langevin {
        target: 1.1,
        gamma: 2.0 / DT,
    };
    resume_refuses("friction", &c, "checkpoint.spec.ensemble.friction");
    let mut c = nve();
    c.spec.timestep = 1.0;
    resume_refuses("timestep", &c, "checkpoint.spec.timestep");
    let mut c = nve();
    c.spec.skin = -0.1;
    resume_refuses("skin", &c, "checkpoint.spec.skin");
    let mut c = nve();
    c.spec.thermostat = Thermostat::StochasticRescale {
        target: 1e3,
        tau: 0.1,
    };
    resume_refuses("target", &c, "checkpoint.spec.temperature");
    let mut c = nve();
    c.spec.thermostat = Thermostat::StochasticRescale {
        target: f64::NAN,
        tau: 0.1,
    };
    resume_refuses(
        "nan-target",
        &c,
        "checkpoint.spec.thermostat.StochasticRescale.target",
    );
}

#[test]
fn an_embedded_setup_that_does_not_resolve_is_refused() {
    let mut c = nve();
    c.setup.sample_every = 0;
    resume_refuses("setup", &c, "checkpoint.setup.sample_every");
}

#[test]
fn simulation_from_state_refuses_a_state_that_would_run_to_infinity() {
    let c = nve();
    let mut state = c.state.clone();
    state.velocities[1] = [1e200, 0.0, 0.0];
    let e = Simulation::from_state(c.spec.clone(), state).err().unwrap();
    assert!(e.to_string().contains("velocities[1]"), "{e}");
    let mut state = c.state.clone();
    state.drift_scale = 0.0;
    assert!(Simulation::from_state(c.spec.clone(), state).is_err());
    let mut state = c.state;
    state.box_length = 1e6;
    assert!(Simulation::from_state(c.spec, state).is_err());
}

#[test]
fn a_run_taken_past_its_steps_leaves_a_checkpoint_that_resumes() {
    let dir = scratch("past");
    let setup = dir.join("s.ron");
    std::fs::write(&setup, setup_text("Nve")).unwrap();
    let (first, second) = (dir.join("first"), dir.join("second"));
    let s = |p: &Path| p.to_str().unwrap().to_owned();
    let steps = (STEPS + 20).to_string();
    let o = noblescope(&[
        "run",
        &s(&setup),
        "--steps",
        &steps,
        "--out",
        &s(&first),
        "--quiet",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    let c = Checkpoint::load(&first.join("final.checkpoint")).unwrap();
    assert_eq!((c.state.step, c.setup.steps), (STEPS + 20, STEPS + 20));
    let more = (STEPS + 40).to_string();
    let o = noblescope(&[
        "resume",
        &s(&first.join("final.checkpoint")),
        "--steps",
        &more,
        "--out",
        &s(&second),
        "--quiet",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_checkpoint_file_larger_than_any_checkpoint_is_refused_without_reading_it() {
    let dir = scratch("large");
    // A sparse file: its size is known without writing (or reading) its bytes.
    let path = dir.join("huge.checkpoint");
    let f = std::fs::File::create(&path).unwrap();
    f.set_len(MAX_CHECKPOINT_BYTES + 1).unwrap();
    drop(f);
    for file in [path.to_str().unwrap(), "/dev/zero"] {
        if !Path::new(file).exists() {
            continue;
        }
        let o = noblescope(&[
            "resume",
            file,
            "--out",
            dir.join("out").to_str().unwrap(),
            "--quiet",
        ]);
        let stderr = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{file}: {stderr}");
        assert!(
            stderr.contains(file) && stderr.contains(&format!("at most {MAX_CHECKPOINT_BYTES} bytes")),
            "{file}: the error names neither the file nor the maximum: {stderr}"
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

fn scratch(name: &str) -> PathBuf {
    command_line::scratch("ckcheck", name)
}
