//! What the command line prints: the run report, the tuning tables and the bench table.

use noblescope::engine::bench::{BenchResult, StageReport, WatchdogCost};
use noblescope::engine::bench_statistics::StatisticsBench;
use noblescope::engine::tuning::{FLUCTUATION_LIMIT, TuneInput, TuningReport};
use noblescope::io::Setup;
use noblescope::io::setup::Length;
use noblescope::io::summary::{MODEL_CAUTION, Summary};
use noblescope::physics::UnitSystem;
use noblescope::physics::lj_eos::{self, Properties, Region};
use std::path::Path;

/// The summary of a finished run, written to `out`.
pub fn run_report(summary: &Summary, out: &Path) {
    let pe = summary.potential_energy_per_atom;
    let p = summary.pressure;
    let t = summary.temperature;
    println!(
        "{} atoms, {} steps, {} samples averaged -> {}",
        summary.atoms,
        summary.steps,
        summary.samples_used,
        out.display()
    );
    println!("  potential energy per atom  {:.5} ± {:.5} ε", pe.mean, pe.stderr);
    println!(
        "  pressure                   {:.5} ± {:.5} ε/σ³",
        p.mean, p.stderr
    );
    println!("  temperature                {:.5} ± {:.5} ε/k", t.mean, t.stderr);
    if let Some(si) = &summary.si {
        println!(
            "  = {:.4} kJ/mol, {:.2} ± {:.2} bar, {:.2} K, {:.4} g/cm³",
            si.potential_energy_per_atom.mean,
            si.pressure.mean,
            si.pressure.stderr,
            si.temperature.mean,
            si.density
        );
    }
    println!(
        "  relative energy drift      {:.3e}",
        summary.relative_energy_drift
    );
    println!(
        "  speed                      {:.3e} atom-steps/s on {} threads",
        summary.atom_steps_per_second, summary.threads
    );
    if summary.equilibration.configured_start_too_early {
        println!(
            "  note: the energy looks equilibrated only from step {} (equilibration_steps is {})",
            summary.equilibration.detected_start_step, summary.equilibration.configured_start_step
        );
    }
    println!("  {MODEL_CAUTION}");
}

/// One line of `bench --statistics`.
pub fn bench_statistics_row(r: &StatisticsBench) {
    println!(
        "statistics refresh, {} samples of 7 series ({}): {:.1} ms best, {:.1} ms median on one core; store {:.1} MB",
        r.samples,
        r.shape,
        r.best_ms,
        r.median_ms,
        r.store_bytes as f64 / 1e6
    );
}

/// Both tables of a tuning scan: timesteps in the unit `input` typed them in (the setup's) and
/// in τ, cutoffs in the unit of the setup's cutoff.
pub fn tune_tables(setup: &Setup, input: &TuneInput, report: &TuningReport) {
    let dt_unit = setup.timestep.symbol();
    let typed: Vec<f64> = input.timesteps.iter().map(|d| d.value()).collect();
    let rows = &report.timesteps;
    println!(
        "timestep scan: constant energy for {} τ from the equilibrated state",
        report.duration_tau
    );
    println!(
        "{:>12} {:>12} {:>8} {:>16} {:>14} {:>12}",
        format!("dt [{dt_unit}]"),
        "dt [tau]",
        "steps",
        "drift/atom/tau",
        "rel. drift",
        "dE/dK rms"
    );
    for (r, v) in rows.iter().zip(&typed) {
        if r.blew_up {
            println!(
                "{v:>12.5} {:>12.5} {:>8} {:>16}",
                r.timestep_tau, r.steps, "blew up"
            );
        } else {
            println!(
                "{v:>12.5} {:>12.5} {:>8} {:>16.3e} {:>14.3e} {:>12.4}",
                r.timestep_tau, r.steps, r.drift_per_atom_per_tau, r.relative_drift, r.fluctuation_ratio
            );
        }
    }
    match report.recommended {
        Some(dt) => println!(
            "largest timestep with total-energy fluctuation under {:.0}% of the kinetic: {:.5} {dt_unit} ({dt:.5} τ)",
            FLUCTUATION_LIMIT * 100.0,
            typed[rows.iter().position(|r| r.timestep_tau == dt).unwrap_or(0)]
        ),
        None => println!("no timestep tried conserved energy well enough: try smaller ones"),
    }
    if report.recommended == rows.iter().map(|r| r.timestep_tau).reduce(f64::max) {
        println!("(that is the largest timestep tried: larger ones may pass too)");
    }
    let (len_unit, per_sigma) = match setup.cutoff {
        Length::Sigma(_) => ("sigma", 1.0),
        Length::Angstrom(_) => ("A", setup.units().sigma_angstrom()),
    };
    println!(
        "cutoff scan: {:?}, averaged over {} configurations (reduced units)",
        report.potential, report.configurations
    );
    println!(
        "{:>12} {:>12} {:>12} {:>16} {:>16} {:>10}",
        format!("rc [{len_unit}]"),
        "U/N (mode)",
        "P (mode)",
        "U/N full est.",
        "P full est.",
        "cost"
    );
    for r in &report.cutoffs {
        println!(
            "{:>12.4} {:>12.5} {:>12.5} {:>16.5} {:>16.5} {:>9.2}x",
            r.cutoff_sigma * per_sigma,
            r.potential,
            r.pressure,
            r.potential_full_estimate,
            r.pressure_full_estimate,
            r.relative_cost
        );
    }
    println!(
        "(full estimate: unshifted pair terms inside rc plus analytic tail corrections, g(r) = 1 beyond rc; cost: wall time of a step relative to the setup's cutoff)"
    );
    let c = &report.cutoff_choice;
    match c.cutoff_sigma {
        Some(rc) => println!(
            "recommended cutoff: {:.4} {len_unit}: {}",
            rc * per_sigma,
            c.reason
        ),
        None => println!("no cutoff recommended: {}", c.reason),
    }
}

/// The scan's rows as CSV: `(timesteps.csv, cutoffs.csv)`, reduced units, with a header line.
pub fn tune_csv(report: &TuningReport) -> (String, String) {
    let mut t = String::from(
        "# timestep scan (reduced units): constant-energy trials from one equilibrated state\ntimestep_tau,steps,drift_per_atom_per_tau,relative_drift,fluctuation_ratio,blew_up\n",
    );
    for r in &report.timesteps {
        t += &format!(
            "{},{},{},{},{},{}\n",
            r.timestep_tau,
            r.steps,
            r.drift_per_atom_per_tau,
            r.relative_drift,
            r.fluctuation_ratio,
            r.blew_up
        );
    }
    let mut c = String::from(
        "# cutoff scan (reduced units): averages over configurations; full estimates add the shift back and the tail corrections; cost relative to the setup's cutoff\ncutoff_sigma,potential,pressure,potential_full_estimate,pressure_full_estimate,relative_cost\n",
    );
    for r in &report.cutoffs {
        c += &format!(
            "{},{},{},{},{},{}\n",
            r.cutoff_sigma,
            r.potential,
            r.pressure,
            r.potential_full_estimate,
            r.pressure_full_estimate,
            r.relative_cost
        );
    }
    (t, c)
}

/// The bench table's title and column heads.
pub fn bench_header() {
    println!("standard LJ liquid, rho*=0.8442, T*=1.44, rc=2.5, skin=0.3, TruncatedShifted, NVE, dt*=0.005");
    println!(
        "{:>9} {:>7} {:>8} {:>14} {:>10} {:>8} {:>12} {:>12}",
        "atoms", "steps", "threads", "atom-steps/s", "ns/a-step", "builds", "peak B/atom", "heap B/atom"
    );
}

/// One row of the bench table.
pub fn bench_row(r: &BenchResult) {
    println!(
        "{:>9} {:>7} {:>8} {:>14.4e} {:>10.1} {:>8} {:>12} {:>12.1}",
        r.atoms,
        r.steps,
        r.threads,
        r.atom_steps_per_second,
        r.nanoseconds_per_atom_step,
        r.list_builds,
        r.peak_bytes_per_atom
            .map(|b| format!("{b:.1}"))
            .unwrap_or_else(|| "n/a".into()),
        r.heap_bytes_per_atom
    );
}

/// How the cost per atom-step grew from the smallest to the largest size measured.
pub fn bench_scaling(results: &[BenchResult]) {
    if let [first, .., last] = results {
        println!(
            "cost per atom-step at {} atoms / at {} atoms: {:.3}",
            last.atoms,
            first.atoms,
            last.nanoseconds_per_atom_step / first.nanoseconds_per_atom_step
        );
    }
}

/// What watching every step costs at one size (`bench --watchdog`).
pub fn bench_watchdog(c: &WatchdogCost) {
    println!(
        "watchdog at {} atoms, {} steps of each kind alternating: drift + kicks {:.4} ms/step watched, {:.4} plain; check {:.4} ms/step; whole step {:.3} ms plain, {:.3} watched; cost {:.2} % of a step",
        c.atoms,
        c.steps,
        c.watched_stage_seconds * 1e3,
        c.plain_stage_seconds * 1e3,
        c.check_seconds * 1e3,
        c.plain_step_seconds * 1e3,
        c.watched_step_seconds * 1e3,
        c.percent()
    );
}

/// The stage times of one size (`bench --stages`): one line per stage that ran, then the whole
/// step (the difference is the step's own bookkeeping).
pub fn bench_stages(r: &StageReport) {
    println!(
        "stages at {} atoms, {} steps, {} list builds, {:.1} pairs/atom:",
        r.atoms, r.steps, r.list_builds, r.pairs_per_atom
    );
    for (stage, t) in r.times.stages().filter(|(_, t)| t.calls > 0) {
        println!(
            "  {:<18} {:>9.3} ms/step {:>8.2} ns/atom-step {:>6} calls {:>9.3} ms/call",
            stage.name(),
            r.seconds_per_step(stage) * 1e3,
            r.nanoseconds_per_atom_step(stage),
            t.calls,
            t.seconds_per_call() * 1e3
        );
    }
    println!(
        "  {:<18} {:>9.3} ms/step {:>8.2} ns/atom-step",
        "whole step",
        r.step_seconds() * 1e3,
        r.step_seconds() * 1e9 / r.atoms as f64
    );
}

/// Where `eos` takes its values from, for both outputs.
const EOS_SOURCE: &str = "Lennard-Jones 12-6 equation of state of Thol, Rutkai, Köster, Lustig, Span & Vrabec, J. Phys. Chem. Ref. Data 45, 023101 (2016)";

/// `eos` as text: reduced values, SI beside them with a real species, region and caution.
pub fn eos_text(p: &Properties, region: Region, units: Option<&UnitSystem>) {
    println!("{EOS_SOURCE}");
    match units {
        Some(u) => println!(
            "  state                      T* = {:.6} ({:.3} K), rho* = {:.6} ({:.5} g/cm³, {} reference)",
            p.temperature,
            p.temperature * u.temperature_kelvin(),
            p.density,
            p.density * u.mass_density_g_cm3(),
            u.reference.label()
        ),
        None => println!(
            "  state                      T* = {:.6}, rho* = {:.6}",
            p.temperature, p.density
        ),
    }
    let si = |x: f64, scale: Option<f64>, unit: &str| match scale {
        Some(s) => format!("  = {:.6} {unit}", x * s),
        None => String::new(),
    };
    println!(
        "  pressure                   {:.10} ε/σ³{}",
        p.pressure,
        si(p.pressure, units.map(|u| u.pressure_bar()), "bar")
    );
    println!(
        "  residual energy per atom   {:.10} ε{}",
        p.residual_energy,
        si(p.residual_energy, units.map(|u| u.energy_kj_mol()), "kJ/mol")
    );
    println!("  compressibility factor     {:.10}", p.compressibility_factor);
    println!("  region                     {}", region.word());
    println!(
        "  (validated for {:.3} <= T* <= {:.2} and p* <= {:.2}, i.e. 0.5-7 T_c and 500 p_c)",
        lj_eos::T_MIN_VALID,
        lj_eos::T_MAX_VALID,
        lj_eos::Eos::max_valid_pressure()
    );
    println!("  {MODEL_CAUTION}");
}

/// `eos --json`: reduced values at the top level, `si` beside them with a real species.
pub fn eos_json(p: &Properties, region: Region, units: Option<&UnitSystem>) {
    let mut doc = serde_json::json!({
        "pressure": p.pressure,
        "residual_energy": p.residual_energy,
        "compressibility_factor": p.compressibility_factor,
        "region": region.word(),
        "temperature": p.temperature,
        "density": p.density,
        "residual_chemical_potential": p.residual_chemical_potential,
        "units": "reduced LJ units (epsilon, sigma, k_B = 1)",
        "source": EOS_SOURCE,
        "caution": MODEL_CAUTION,
    });
    if let Some(u) = units {
        doc["si"] = serde_json::json!({
            "species": u.reference.label(),
            "temperature_kelvin": p.temperature * u.temperature_kelvin(),
            "density_g_cm3": p.density * u.mass_density_g_cm3(),
            "pressure_bar": p.pressure * u.pressure_bar(),
            "residual_energy_kj_mol": p.residual_energy * u.energy_kj_mol(),
        });
    }
    println!("{}", serde_json::to_string_pretty(&doc).unwrap_or_default());
}
