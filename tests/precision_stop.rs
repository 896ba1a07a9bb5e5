//! Runs that stop when precise enough: a precision target ends the run early with the target
//! met, the same run continued from a checkpoint stops at the same step, and `summary.json`
//! carries the statistics of every followed quantity.

mod command_line;

use command_line::{noblescope, scratch, text};
use serde_json::Value;
use std::path::{Path, PathBuf};

/// A small liquid near a bath, started from a lattice.
fn setup(dir: &Path, name: &str, extra: &str, species: &str, density: &str, temperature: &str) -> PathBuf {
    let p = dir.join(format!("{name}.ron"));
    std::fs::write(
        &p,
        format!(
            "Setup(
    species: [{species}],
    atoms: 256,
    density: {density},
    temperature: {temperature},
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    ensemble: Nvt(thermostat: Langevin(friction: Reduced(1.0))),
    seed: 11,
    steps: 60000,
    sample_every: 5,
    {extra}
)"
        ),
    )
    .unwrap();
    p
}

fn reduced_liquid(dir: &Path, name: &str, extra: &str) -> PathBuf {
    setup(
        dir,
        name,
        extra,
        "(kind: ReducedLJ, share: 1.0)",
        "Reduced(0.75)",
        "Reduced(1.5)",
    )
}

fn summary(out: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(out.join("summary.json")).unwrap()).unwrap()
}

#[test]
fn a_precision_target_stops_the_run_early_and_a_continued_run_stops_at_the_same_step() {
    let d = scratch("precision", "stop");
    let target = "precision_targets: [(quantity: Pressure, stderr: Reduced(0.02))],";
    let s = reduced_liquid(&d, "liquid", target);
    let whole = d.join("whole");
    let o = noblescope(&[
        "run",
        s.to_str().unwrap(),
        "--out",
        whole.to_str().unwrap(),
        "--quiet",
    ]);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let a = summary(&whole);
    assert_eq!(a["stopped_because"], "precision");
    let stop = a["steps"].as_u64().unwrap();
    assert!(stop < 60000, "stopped at {stop}");
    let t = &a["precision_targets"][0];
    assert_eq!(t["quantity"], "pressure");
    assert_eq!(t["met"], true);
    assert!(t["stderr"].as_f64().unwrap() <= 0.02);
    assert_eq!(a["equilibration"]["equilibrated"], true);
    let p = &a["quantities"]["pressure"];
    assert_eq!(p["stderr"].as_f64().unwrap(), t["stderr"].as_f64().unwrap());

    // The same setup run to half that step, then continued from its checkpoint.
    let half = d.join("half");
    let o = noblescope(&[
        "run",
        s.to_str().unwrap(),
        "--out",
        half.to_str().unwrap(),
        "--quiet",
        "--steps",
        &(stop / 2).to_string(),
    ]);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let b = summary(&half);
    assert_eq!(
        b["stopped_because"], "steps",
        "the half run must not be precise enough already"
    );
    let rest = d.join("rest");
    let o = noblescope(&[
        "resume",
        half.join("final.checkpoint").to_str().unwrap(),
        "--out",
        rest.to_str().unwrap(),
        "--quiet",
    ]);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let c = summary(&rest);
    assert_eq!(c["stopped_because"], "precision");
    assert_eq!(
        c["steps"].as_u64().unwrap(),
        stop,
        "continued run stopped elsewhere"
    );
    // Same samples, same statistics, bit for bit.
    assert_eq!(c["quantities"], a["quantities"]);
}

#[test]
fn the_command_line_flag_sets_a_target_and_bad_flags_are_refused_with_exit_2() {
    let d = scratch("precision", "flag");
    let s = reduced_liquid(&d, "liquid", "");
    let out = d.join("out");
    let o = noblescope(&[
        "run",
        s.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
        "--until-stderr",
        "pressure=0.02",
    ]);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    assert_eq!(summary(&out)["stopped_because"], "precision");
    for (flag, words) in [
        ("volume=0.1", "QUANTITY one of"),
        ("pressure", "an '='"),
        ("pressure=abc", "STDERR a number"),
        ("pressure=-1", "above zero"),
    ] {
        let o = noblescope(&[
            "run",
            s.to_str().unwrap(),
            "--out",
            d.join("bad").to_str().unwrap(),
            "--quiet",
            "--until-stderr",
            flag,
        ]);
        let (_, err) = text(&o);
        assert_eq!(o.status.code(), Some(2), "{flag}: {err}");
        assert!(err.contains(words), "{flag}: {err}");
        assert!(!d.join("bad").join("summary.json").exists());
    }
}

#[test]
fn summary_lists_every_quantity_and_the_equation_of_state_for_one_species() {
    let d = scratch("precision", "summary");
    let s = reduced_liquid(&d, "liquid", "");
    let out = d.join("out");
    let o = noblescope(&[
        "run",
        s.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
        "--steps",
        "3000",
    ]);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let v = summary(&out);
    assert_eq!(v["stopped_because"], "steps");
    for key in [
        "temperature",
        "pressure",
        "potential_energy_per_atom",
        "total_energy_per_atom",
        "conserved_energy_per_atom",
    ] {
        let q = &v["quantities"][key];
        for field in [
            "mean",
            "stderr",
            "statistical_inefficiency",
            "effective_samples",
            "start_step",
        ] {
            assert!(q[field].is_number(), "{key}.{field}: {q}");
        }
        assert!(q["drifting"].is_boolean(), "{key}.drifting");
    }
    // Older keys keep working.
    assert!(v["pressure"]["mean"].is_number() && v["equilibration"]["detected_start_step"].is_number());
    let eos = &v["equation_of_state"];
    assert_eq!(eos["region"], "supercritical");
    assert_eq!(eos["temperature"].as_f64().unwrap(), 1.5);
    assert_eq!(eos["temperature_from"], "bath");
    // Thol et al. (2016) at T* = 1.5, ρ* = 0.75, against the run's full-potential estimate;
    // the truncated model with tail corrections and a 256-atom box is within a few percent.
    let p_eos = eos["pressure"].as_f64().unwrap();
    let p_run = eos["run_full_potential_pressure"]["mean"].as_f64().unwrap();
    assert!((p_run - p_eos).abs() < 0.15, "p run {p_run} vs equation {p_eos}");
    let u_eos = eos["residual_energy"].as_f64().unwrap();
    let u_run = eos["run_full_potential_residual_energy"]["mean"]
        .as_f64()
        .unwrap();
    assert!((u_run - u_eos).abs() < 0.05, "u run {u_run} vs equation {u_eos}");
}

#[test]
fn the_equation_of_state_is_hidden_inside_the_two_phase_region_and_absent_for_mixtures() {
    let d = scratch("precision", "hidden");
    let s = setup(
        &d,
        "coexistence",
        "",
        "(kind: ReducedLJ, share: 1.0)",
        "Reduced(0.3)",
        "Reduced(0.9)",
    );
    let out = d.join("two-phase");
    let o = noblescope(&[
        "run",
        s.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
        "--steps",
        "500",
    ]);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    let eos = &summary(&out)["equation_of_state"];
    assert_eq!(eos["region"], "two-phase");
    assert!(eos["pressure"].is_null());
    assert!(eos["not_shown_because"].as_str().unwrap().contains("two-phase"));

    let m = setup(
        &d,
        "blend",
        "",
        "(kind: Krypton, share: 0.5), (kind: Xenon, share: 0.5)",
        "GramsPerCubicCentimetre(2.5)",
        "Kelvin(200.0)",
    );
    let out = d.join("blend");
    let o = noblescope(&[
        "run",
        m.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
        "--steps",
        "200",
    ]);
    assert_eq!(o.status.code(), Some(0), "{:?}", text(&o));
    assert!(summary(&out).get("equation_of_state").is_none());
}
