//! The per-step watchdog names the atoms where trouble starts, before any value overflows.
//!
//! Each blow-up here is made on purpose and its cause is known from outside the watchdog: the
//! atoms that really moved furthest (displacements measured by the test from positions before
//! and after the step), the atom the test gave a huge velocity, the pair the test put too close.

use noblescope::engine::{AlarmKind, Session};
use noblescope::io::Setup;

const LIQUID: &str = r#"Setup(
    title: "watchdog liquid",
    species: [(kind: ReducedLJ, share: 1.0)],
    atoms: 500,
    density: Reduced(0.8442),
    temperature: Reduced(1.44),
    timestep: Reduced(0.005),
    cutoff: Sigma(2.5),
    potential: TruncatedShifted,
    ensemble: Nve,
    seed: 11,
    steps: 2000,
    sample_every: 10,
)"#;

fn liquid(timestep: f64) -> Session {
    let text = LIQUID.replace("Reduced(0.005)", &format!("Reduced({timestep})"));
    Session::new(Setup::parse(&text, "liquid.ron").unwrap()).unwrap()
}

fn all_finite(s: &Session) -> bool {
    let sys = s.simulation().system();
    sys.positions
        .iter()
        .chain(&sys.velocities)
        .chain(&sys.forces)
        .all(|v| v.iter().all(|x| x.is_finite()))
}

#[test]
fn a_healthy_liquid_raises_no_alarm() {
    let mut s = liquid(0.005);
    for _ in 0..1000 {
        let out = s.step();
        assert!(out.alarm.is_none(), "{:?}", out.alarm.map(|a| a.describe()));
    }
}

#[test]
fn a_far_too_large_timestep_is_a_jump_before_anything_overflows_naming_the_farthest_movers() {
    let mut s = liquid(0.05);
    for _ in 0..200 {
        let before = s.simulation().system().positions.clone();
        let out = s.step();
        let Some(alarm) = out.alarm else { continue };
        assert!(
            matches!(alarm.kind, AlarmKind::Jump | AlarmKind::EnergyJump),
            "{}",
            alarm.describe()
        );
        assert!(
            all_finite(&s),
            "the alarm came after values overflowed: {}",
            alarm.describe()
        );
        // Displacements as the test sees them: positions are unwrapped, so a plain difference.
        let after = &s.simulation().system().positions;
        let mut moved: Vec<(usize, f64)> = before
            .iter()
            .zip(after)
            .enumerate()
            .map(|(i, (a, b))| {
                (
                    i,
                    ((b[0] - a[0]).powi(2) + (b[1] - a[1]).powi(2) + (b[2] - a[2]).powi(2)).sqrt(),
                )
            })
            .collect();
        moved.sort_by(|a, b| b.1.total_cmp(&a.1));
        let named = alarm.atom_indices();
        assert!(!named.is_empty());
        let expected: Vec<usize> = moved.iter().take(named.len()).map(|m| m.0).collect();
        assert_eq!(named, expected, "{}", alarm.describe());
        let bound = s.watchdog().bounds.max_move;
        assert!(
            moved[named.len() - 1].1 > bound,
            "every named atom crossed the bound"
        );
        if named.len() < 8 {
            assert!(
                moved[named.len()].1 <= bound,
                "no atom over the bound is left out"
            );
        }
        for a in &alarm.atoms {
            assert_eq!(a.neighbours.len(), 4);
            assert!(a.neighbours.windows(2).all(|w| w[0].distance <= w[1].distance));
        }
        return;
    }
    panic!("no alarm in 200 steps at dt = 0.05 τ");
}

#[test]
fn one_atom_given_a_huge_velocity_is_the_atom_named() {
    let mut s = liquid(0.005);
    for _ in 0..50 {
        assert!(s.step().alarm.is_none());
    }
    s.simulation_mut().system_mut().velocities[137] = [0.0, -90.0, 40.0];
    let alarm = s.step().alarm.expect("the fast atom is caught in its first step");
    assert_eq!(alarm.kind, AlarmKind::Jump, "{}", alarm.describe());
    assert_eq!(alarm.step, 51);
    assert_eq!(alarm.atom_indices(), [137], "{}", alarm.describe());
    assert!(alarm.detail.contains("atom 137 moved"), "{}", alarm.detail);
}

#[test]
fn two_atoms_placed_a_quarter_sigma_apart_are_an_overlap_naming_exactly_those_two_at_the_start() {
    let mut s = liquid(0.005);
    let sim = s.simulation_mut();
    let p = sim.system().positions[10];
    sim.system_mut().positions[321] = [p[0] + 0.25, p[1], p[2]];
    sim.refresh();
    let alarm = s.step().alarm.expect("an overlap at the start");
    assert_eq!(alarm.kind, AlarmKind::Overlap, "{}", alarm.describe());
    assert_eq!(alarm.step, 0, "caught before the first step flings them apart");
    let mut named = alarm.atom_indices();
    named.sort();
    assert_eq!(named, [10, 321], "{}", alarm.describe());
    assert_eq!(alarm.atoms[0].neighbours[0].atom, alarm.atoms[1].atom);
    assert!((alarm.atoms[0].neighbours[0].distance - 0.25).abs() < 1e-12);
}

#[test]
fn a_restored_snapshot_is_the_exact_state_and_runs_on_as_before() {
    let mut s = liquid(0.005);
    for _ in 0..37 {
        s.step();
    }
    let snapshot = s.simulation().state();
    for _ in 0..25 {
        s.step();
    }
    let later = s.simulation().state();
    s.restore(snapshot.clone()).unwrap();
    assert_eq!(s.simulation().state(), snapshot, "restored bit for bit");
    for _ in 0..25 {
        assert!(s.step().alarm.is_none());
    }
    assert_eq!(
        s.simulation().state(),
        later,
        "the same 25 steps again, bit for bit"
    );
}

#[test]
fn the_bundled_blow_up_is_caught_as_a_jump_of_a_pair_before_anything_overflows() {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/assets/krypton-timestep-too-long.ron"
    );
    let mut s = Session::new(Setup::load(std::path::Path::new(path)).unwrap()).unwrap();
    for _ in 0..200 {
        if let Some(alarm) = s.step().alarm {
            assert_eq!(alarm.kind, AlarmKind::Jump, "{}", alarm.describe());
            assert!(all_finite(&s));
            assert!(alarm.atoms.len() >= 2, "{}", alarm.describe());
            return;
        }
    }
    panic!("the bundled blow-up raised no alarm in 200 steps");
}
