//! The setup form: what the user is editing, its validation, and the difference to what runs.
//!
//! The form keeps text as typed. [`SetupForm::build`] turns it into a [`Setup`] and validates
//! it with [`Setup::resolve`]; every error is attached to the field it names, so the field shows
//! the value and the allowed range, and nothing invalid can be applied. That validation is pure
//! and runs every frame; whether the atoms fit in this machine's free memory is checked once, when
//! Apply is pressed ([`Setup::check_memory_available`]).

use super::palette;
use super::unit_field::{DensityUnit, LengthUnit, RateUnit, TemperatureUnit, TimeUnit, UnitField};
use crate::io::precision_setting::PrecisionSetting;
use crate::io::setup::{Ensemble, Setup, SetupError, SpeciesShare, ThermostatChoice};
use crate::physics::{PotentialMode, Species};
use std::collections::BTreeMap;

/// Which thermostat the form offers (the ensemble picker).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ThermostatKind {
    /// Constant energy, no thermostat.
    None,
    /// Stochastic velocity rescaling.
    StochasticRescale,
    /// Langevin dynamics.
    Langevin,
}

/// One row of the composition table.
#[derive(Clone, Debug, PartialEq)]
pub struct SpeciesRow {
    /// The species picked (for a custom row: as last built from its fields).
    pub kind: Species,
    /// Share as typed.
    pub share: String,
    /// The fields of a species of the user's own, when the row is one.
    pub custom: Option<CustomRow>,
}

/// The fields of a custom species as typed.
#[derive(Clone, Debug, PartialEq)]
pub struct CustomRow {
    pub name: String,
    pub epsilon: String,
    /// ε in kJ/mol (else ε/k_B in K).
    pub epsilon_kj_mol: bool,
    pub sigma: String,
    /// σ in nm (else Å).
    pub sigma_nm: bool,
    /// Mass in Da.
    pub mass: String,
}

impl CustomRow {
    /// The fields of `kind`: its own for a custom species, else its parameters in K, Å and Da
    /// under the name "my <species>".
    pub fn from_species(kind: Species) -> CustomRow {
        use crate::physics::species::{Size, WellDepth};
        use crate::ui::unit_field::format_number;
        if let Species::Custom {
            name,
            epsilon,
            sigma,
            mass,
        } = kind
        {
            let (epsilon, epsilon_kj_mol) = match epsilon {
                WellDepth::Kelvin(k) => (k, false),
                WellDepth::KiloJoulesPerMole(e) => (e, true),
            };
            let (sigma, sigma_nm) = match sigma {
                Size::Angstrom(a) => (a, false),
                Size::Nanometre(n) => (n, true),
            };
            return CustomRow {
                name: name.as_str().to_string(),
                epsilon: format_number(epsilon),
                epsilon_kj_mol,
                sigma: format_number(sigma),
                sigma_nm,
                mass: format_number(mass.grams_per_mole()),
            };
        }
        let p = if kind.is_real() {
            kind.params()
        } else {
            Species::Argon.params()
        };
        let base = if kind.is_real() { kind } else { Species::Argon };
        CustomRow {
            name: format!("my {}", base.label()),
            epsilon: format_number(p.epsilon_kelvin),
            epsilon_kj_mol: false,
            sigma: format_number(p.sigma_angstrom),
            sigma_nm: false,
            mass: format_number(p.molar_mass),
        }
    }

    /// The species these fields describe; fields that are not numbers get an error (keyed
    /// `species[i].kind.<field>`) and a stand-in value.
    fn build(&self, i: usize, errors: &mut FieldErrors) -> Species {
        use crate::physics::species::{AtomMass, Size, WellDepth};
        let mut number = |f: &str, text: &str, unit: &str| -> f64 {
            text.trim().parse::<f64>().unwrap_or_else(|_| {
                let field = format!("species[{i}].kind.{f}");
                errors.insert(
                    field.clone(),
                    format!(
                        "{field}: \"{}\" is not a number; allowed: a number in {unit}",
                        text.trim()
                    ),
                );
                1.0
            })
        };
        let eps_unit = if self.epsilon_kj_mol { "kJ/mol" } else { "K" };
        let e = number("epsilon", &self.epsilon, eps_unit);
        let sig_unit = if self.sigma_nm { "nm" } else { "Å" };
        let sg = number("sigma", &self.sigma, sig_unit);
        let m = number("mass", &self.mass, "Da");
        Species::Custom {
            name: self.name.as_str().into(),
            epsilon: if self.epsilon_kj_mol {
                WellDepth::KiloJoulesPerMole(e)
            } else {
                WellDepth::Kelvin(e)
            },
            sigma: if self.sigma_nm {
                Size::Nanometre(sg)
            } else {
                Size::Angstrom(sg)
            },
            mass: AtomMass::Dalton(m),
        }
    }
}

/// What the user asked the form to do this frame.
#[derive(Clone, Debug, PartialEq)]
pub enum FormAction {
    /// Restart the simulation from this setup.
    Apply(Box<Setup>),
    /// Change the running simulation without restarting (only live-changeable fields differ).
    ApplyLive(Box<Setup>),
    /// Put the form back to what runs.
    Revert,
}

/// Form state: every field as typed.
#[derive(Clone, Debug, PartialEq)]
pub struct SetupForm {
    pub title: String,
    pub species: Vec<SpeciesRow>,
    pub atoms: String,
    pub density: UnitField<DensityUnit>,
    pub temperature: UnitField<TemperatureUnit>,
    pub timestep: UnitField<TimeUnit>,
    pub cutoff: UnitField<LengthUnit>,
    pub skin: UnitField<LengthUnit>,
    pub potential: PotentialMode,
    pub tail_correction: bool,
    pub thermostat: ThermostatKind,
    pub relaxation: UnitField<TimeUnit>,
    pub friction: UnitField<RateUnit>,
    pub seed: String,
    pub steps: String,
    pub equilibration_steps: String,
    pub sample_every: String,
    /// Kept from the loaded setup (not edited in the form).
    pub trajectory_every: Option<u64>,
    /// Carried through unchanged (the form has no control for it).
    pub recover: bool,
    /// Carried through unchanged (the form has no control for it).
    pub start: crate::io::setup::Start,
    /// Kept from the loaded setup (not edited in the form).
    pub rdf_every: Option<u64>,
    /// Kept from the loaded setup (not edited in the form).
    pub rdf_reach: crate::io::setup::RdfReach,
    /// Kept from the loaded setup (not edited in the form).
    pub diffusion_window: Option<(crate::io::setup::Duration, crate::io::setup::Duration)>,
    /// Kept from the loaded setup (not edited in the form).
    pub dynamics_every: Option<u64>,
    /// Kept from the loaded setup (not edited in the form).
    pub speeds_every: Option<u64>,
    /// Kept from the loaded setup (not edited in the form).
    pub temperature_ramp: Option<crate::io::setup::TemperatureRamp>,
    /// Kept from the loaded setup (not edited in the form; shown in the statistics panel).
    pub precision_targets: Vec<PrecisionSetting>,
    /// The setup Apply last refused because it does not fit in memory, and why; shown at the
    /// atoms field while the form still describes that setup.
    pub memory_refusal: Option<(Setup, SetupError)>,
}

/// Field errors by setup field name ("density", "species[1].share", …); "" holds errors that
/// name no field of the form.
pub type FieldErrors = BTreeMap<String, String>;

fn parse_int(field: &str, text: &str, errors: &mut FieldErrors) -> u64 {
    match text.trim().replace('_', "").parse::<u64>() {
        Ok(v) => v,
        Err(_) => {
            errors.insert(
                field.into(),
                format!(
                    "{field}: \"{}\" is not a whole number; allowed: a whole number ≥ 0",
                    text.trim()
                ),
            );
            0
        }
    }
}

impl SetupForm {
    /// A form showing `s`.
    pub fn from_setup(s: &Setup) -> Self {
        let (thermostat, relaxation, friction) = match s.ensemble {
            Ensemble::Nve => (
                ThermostatKind::None,
                crate::io::setup::Duration::Picoseconds(1.0),
                crate::io::setup::Rate::PerPicosecond(1.0),
            ),
            Ensemble::Nvt {
                thermostat: ThermostatChoice::StochasticRescale { relaxation },
            } => (
                ThermostatKind::StochasticRescale,
                relaxation,
                crate::io::setup::Rate::PerPicosecond(1.0),
            ),
            Ensemble::Nvt {
                thermostat: ThermostatChoice::Langevin { friction },
            } => (
                ThermostatKind::Langevin,
                crate::io::setup::Duration::Picoseconds(1.0),
                friction,
            ),
        };
        let (relaxation, friction) = if s.units().has_real_units() {
            (relaxation, friction)
        } else {
            let r = match relaxation {
                crate::io::setup::Duration::Reduced(_) => relaxation,
                _ => crate::io::setup::Duration::Reduced(0.5),
            };
            let f = match friction {
                crate::io::setup::Rate::Reduced(_) => friction,
                _ => crate::io::setup::Rate::Reduced(1.0),
            };
            (r, f)
        };
        SetupForm {
            title: s.title.clone(),
            species: s
                .species
                .iter()
                .map(|x| SpeciesRow {
                    kind: x.kind,
                    share: super::unit_field::format_number(x.share),
                    custom: x.kind.is_custom().then(|| CustomRow::from_species(x.kind)),
                })
                .collect(),
            atoms: s.atoms.to_string(),
            density: UnitField::from_value(s.density),
            temperature: UnitField::from_value(s.temperature),
            timestep: UnitField::from_value(s.timestep),
            cutoff: UnitField::from_value(s.cutoff),
            skin: UnitField::from_value(s.skin),
            potential: s.potential,
            tail_correction: s.tail_correction,
            thermostat,
            relaxation: UnitField::from_value(relaxation),
            friction: UnitField::from_value(friction),
            seed: s.seed.to_string(),
            steps: s.steps.to_string(),
            equilibration_steps: s.equilibration_steps.to_string(),
            sample_every: s.sample_every.to_string(),
            trajectory_every: s.trajectory_every,
            recover: s.recover,
            start: s.start.clone(),
            rdf_every: s.rdf_every,
            rdf_reach: s.rdf_reach,
            diffusion_window: s.diffusion_window,
            dynamics_every: s.dynamics_every,
            speeds_every: s.speeds_every,
            temperature_ramp: s.temperature_ramp,
            precision_targets: s.precision_targets.clone(),
            memory_refusal: None,
        }
    }

    /// The setup the form describes, before validation, plus the errors of fields that are not
    /// even numbers. Fields that fail to parse are filled with a stand-in so the rest can be
    /// converted and shown.
    pub fn draft(&self) -> (Setup, FieldErrors) {
        let mut errors = FieldErrors::new();
        let mut species = Vec::new();
        for (i, row) in self.species.iter().enumerate() {
            let field = format!("species[{i}].share");
            let share = match row.share.trim().parse::<f64>() {
                Ok(v) => v,
                Err(_) => {
                    errors.insert(
                        field.clone(),
                        format!(
                            "{field}: \"{}\" is not a number; allowed: 0 < share ≤ 1",
                            row.share.trim()
                        ),
                    );
                    1.0
                }
            };
            let kind = match &row.custom {
                Some(c) => c.build(i, &mut errors),
                None => row.kind,
            };
            species.push(SpeciesShare { kind, share });
        }
        use crate::io::setup::{Density, Duration, Length, Rate, Temperature};
        fn unit<T>(errors: &mut FieldErrors, field: &str, r: Result<T, String>, fallback: T) -> T {
            r.unwrap_or_else(|e| {
                errors.insert(field.to_string(), e);
                fallback
            })
        }
        let density = unit(
            &mut errors,
            "density",
            self.density.value("density"),
            Density::Reduced(0.8),
        );
        let temperature = unit(
            &mut errors,
            "temperature",
            self.temperature.value("temperature"),
            Temperature::Reduced(1.0),
        );
        let timestep = unit(
            &mut errors,
            "timestep",
            self.timestep.value("timestep"),
            Duration::Reduced(0.005),
        );
        let cutoff = unit(
            &mut errors,
            "cutoff",
            self.cutoff.value("cutoff"),
            Length::Sigma(2.5),
        );
        let skin = unit(&mut errors, "skin", self.skin.value("skin"), Length::Sigma(0.3));
        let relaxation = unit(
            &mut errors,
            "ensemble.relaxation",
            self.relaxation.value("ensemble.relaxation"),
            Duration::Reduced(0.5),
        );
        let friction = unit(
            &mut errors,
            "ensemble.friction",
            self.friction.value("ensemble.friction"),
            Rate::Reduced(1.0),
        );
        let ensemble = match self.thermostat {
            ThermostatKind::None => Ensemble::Nve,
            ThermostatKind::StochasticRescale => Ensemble::Nvt {
                thermostat: ThermostatChoice::StochasticRescale { relaxation },
            },
            ThermostatKind::Langevin => Ensemble::Nvt {
                thermostat: ThermostatChoice::Langevin { friction },
            },
        };
        let atoms = parse_int("atoms", &self.atoms, &mut errors);
        let seed = parse_int("seed", &self.seed, &mut errors);
        let steps = parse_int("steps", &self.steps, &mut errors);
        let equilibration_steps = parse_int("equilibration_steps", &self.equilibration_steps, &mut errors);
        let sample_every = parse_int("sample_every", &self.sample_every, &mut errors);
        let setup = Setup {
            title: self.title.clone(),
            species,
            atoms,
            density,
            temperature,
            timestep,
            cutoff,
            skin,
            potential: self.potential,
            tail_correction: self.tail_correction,
            ensemble,
            seed,
            steps,
            equilibration_steps,
            sample_every,
            trajectory_every: self.trajectory_every,
            recover: self.recover,
            start: self.start.clone(),
            rdf_every: self.rdf_every,
            rdf_reach: self.rdf_reach,
            diffusion_window: self.diffusion_window,
            dynamics_every: self.dynamics_every,
            speeds_every: self.speeds_every,
            temperature_ramp: self.temperature_ramp,
            precision_targets: self.precision_targets.clone(),
        };
        (setup, errors)
    }

    /// The validated setup, or every error found, keyed by field.
    ///
    /// Validation stops at the first range error `resolve` finds; parse errors of all fields
    /// are reported together.
    pub fn build(&self) -> Result<Setup, FieldErrors> {
        let (setup, mut errors) = self.draft();
        if !errors.is_empty() {
            return Err(errors);
        }
        match setup.resolve() {
            Ok(_) => Ok(setup),
            Err(e) => {
                let key = e.field_name().map(|f| f.to_string()).unwrap_or_default();
                errors.insert(key, e.to_string());
                Err(errors)
            }
        }
    }

    /// Why Apply refused `setup` (it does not fit in this machine's memory), if it did.
    fn refusal_of(&self, setup: &Setup) -> Option<&SetupError> {
        self.memory_refusal
            .as_ref()
            .filter(|(refused, _)| refused == setup)
            .map(|(_, e)| e)
    }

    /// Whether `next` differs from `running` only in fields that can change while running
    /// (timestep, cutoff, skin, potential, tail correction, ensemble, temperature target).
    pub fn live_changeable(running: &Setup, next: &Setup) -> bool {
        let mut probe = next.clone();
        probe.timestep = running.timestep;
        probe.cutoff = running.cutoff;
        probe.skin = running.skin;
        probe.potential = running.potential;
        probe.tail_correction = running.tail_correction;
        probe.ensemble = running.ensemble;
        probe.temperature = running.temperature;
        probe == *running && next != running
    }

    /// Draws the form. `running` is the setup the engine runs; `engine_running` whether it steps.
    pub fn show(&mut self, ui: &mut egui::Ui, running: &Setup) -> Option<FormAction> {
        let (draft, _) = self.draft();
        let built = self.build();
        let mut errors = built.as_ref().err().cloned().unwrap_or_default();
        let refused = built.as_ref().ok().and_then(|s| self.refusal_of(s)).cloned();
        if let Some(e) = &refused {
            errors.insert(e.field_name().unwrap_or_default().to_string(), e.to_string());
        }
        let mut new_refusal = None;
        let mut action = None;
        let err_at = |ui: &mut egui::Ui, key: &str| {
            if let Some(e) = errors.get(key) {
                ui.colored_label(palette::ERROR_TEXT, e.clone());
            }
        };

        ui.horizontal(|ui| {
            let l = ui.label("Title");
            ui.add(egui::TextEdit::singleline(&mut self.title).desired_width(260.0))
                .labelled_by(l.id);
        });
        ui.separator();
        ui.strong("Composition");
        let mut remove = None;
        let n = self.species.len();
        for (i, row) in self.species.iter_mut().enumerate() {
            ui.horizontal(|ui| {
                let shown = match &row.custom {
                    Some(c) => format!("custom: {}", c.name),
                    None => row.kind.label().to_string(),
                };
                egui::ComboBox::from_id_salt(("species", i))
                    .selected_text(shown)
                    .width(100.0)
                    .show_ui(ui, |ui| {
                        for s in Species::ALL {
                            let on = row.custom.is_none() && row.kind == s;
                            if ui.selectable_label(on, s.label()).clicked() {
                                row.kind = s;
                                row.custom = None;
                            }
                        }
                        if ui
                            .selectable_label(row.custom.is_some(), "custom…")
                            .on_hover_text("a parameter set of your own: name, ε, σ and mass")
                            .clicked()
                            && row.custom.is_none()
                        {
                            row.custom = Some(CustomRow::from_species(row.kind));
                        }
                    })
                    .response
                    .on_hover_text(format!("species {}", i + 1));
                let (rect, _) = ui.allocate_exact_size(egui::vec2(12.0, 12.0), egui::Sense::hover());
                ui.painter()
                    .circle_filled(rect.center(), 5.5, palette::species_colour(row.kind));
                let l = ui.label("share");
                ui.add(egui::TextEdit::singleline(&mut row.share).desired_width(60.0))
                    .labelled_by(l.id);
                if n > 1
                    && ui
                        .small_button("Remove")
                        .on_hover_text("remove this species")
                        .clicked()
                {
                    remove = Some(i);
                }
            });
            if let Some(c) = row.custom.as_mut() {
                custom_fields(ui, i, c);
            }
            err_at(ui, &format!("species[{i}].share"));
            err_at(ui, &format!("species[{i}].kind"));
            for f in ["name", "epsilon", "sigma", "mass"] {
                err_at(ui, &format!("species[{i}].kind.{f}"));
            }
        }
        if let Some(i) = remove {
            self.species.remove(i);
        }
        ui.horizontal(|ui| {
            if self.species.len() < crate::io::setup::MAX_SPECIES && ui.button("Add species").clicked() {
                let used: Vec<Species> = self.species.iter().map(|r| r.kind).collect();
                if let Some(s) = Species::ALL
                    .into_iter()
                    .find(|s| s.is_real() && !used.contains(s))
                {
                    self.species.push(SpeciesRow {
                        kind: s,
                        share: "0".into(),
                        custom: None,
                    });
                }
            }
            ui.weak("The first species sets the reduced units.");
        });
        err_at(ui, "species");

        ui.separator();
        ui.strong("State");
        ui.horizontal(|ui| {
            let l = ui.label("Atoms");
            ui.add(egui::TextEdit::singleline(&mut self.atoms).desired_width(80.0))
                .labelled_by(l.id);
        });
        err_at(ui, "atoms");
        self.density.show(ui, "Density", &draft);
        err_at(ui, "density");
        self.temperature.show(ui, "Temperature", &draft);
        err_at(ui, "temperature");
        for note in draft.cautions() {
            ui.colored_label(palette::CAUTION_TEXT, format!("Note: {note}"));
        }

        ui.separator();
        ui.strong("Dynamics");
        self.timestep.show(ui, "Timestep", &draft);
        err_at(ui, "timestep");
        self.cutoff.show(ui, "Cutoff", &draft);
        err_at(ui, "cutoff");
        self.skin.show(ui, "Skin", &draft);
        err_at(ui, "skin");
        ui.horizontal(|ui| {
            ui.label("Potential");
            for (m, name, tip) in [
                (
                    PotentialMode::Truncated,
                    "cut",
                    "U(r) up to the cutoff, zero beyond",
                ),
                (
                    PotentialMode::TruncatedShifted,
                    "cut + shift",
                    "energy shifted to zero at the cutoff",
                ),
                (
                    PotentialMode::ShiftedForce,
                    "smooth force",
                    "energy and force both go to zero at the cutoff",
                ),
            ] {
                ui.radio_value(&mut self.potential, m, name).on_hover_text(tip);
            }
        });
        ui.checkbox(&mut self.tail_correction, "Long-range tail correction");
        ui.horizontal(|ui| {
            ui.label("Ensemble");
            ui.radio_value(&mut self.thermostat, ThermostatKind::None, "constant energy");
            ui.radio_value(
                &mut self.thermostat,
                ThermostatKind::StochasticRescale,
                "rescale bath",
            );
            ui.radio_value(&mut self.thermostat, ThermostatKind::Langevin, "Langevin bath");
        });
        match self.thermostat {
            ThermostatKind::None => {}
            ThermostatKind::StochasticRescale => {
                self.relaxation.show(ui, "Bath relaxation", &draft);
                err_at(ui, "ensemble.relaxation");
            }
            ThermostatKind::Langevin => {
                self.friction.show(ui, "Bath friction", &draft);
                err_at(ui, "ensemble.friction");
            }
        }

        ui.separator();
        ui.strong("Run length and sampling");
        egui::Grid::new("run-grid").num_columns(2).show(ui, |ui| {
            for (label, text) in [
                ("Steps", &mut self.steps),
                ("Equilibration steps", &mut self.equilibration_steps),
                ("Sample every", &mut self.sample_every),
                ("Seed", &mut self.seed),
            ] {
                let l = ui.label(label);
                ui.add(egui::TextEdit::singleline(text).desired_width(100.0))
                    .labelled_by(l.id);
                ui.end_row();
            }
        });
        for key in [
            "steps",
            "equilibration_steps",
            "sample_every",
            "seed",
            "trajectory_every",
            "",
        ] {
            err_at(ui, key);
        }

        ui.separator();
        let unapplied = built.as_ref().map(|s| s != running).unwrap_or(true);
        ui.horizontal(|ui| {
            let ok = built.is_ok();
            let apply = ui
                .add_enabled(ok && unapplied, egui::Button::new("Apply and restart"))
                .on_hover_text("start a fresh simulation from this setup")
                .on_disabled_hover_text(if ok { "nothing to apply" } else { "fix the marked fields first" });
            if apply.clicked()
                && let Ok(s) = &built {
                    match s.check_memory_available() {
                        Ok(()) => action = Some(FormAction::Apply(Box::new(s.clone()))),
                        Err(e) => new_refusal = Some((s.clone(), e)),
                    }
                }
            let live = built.as_ref().map(|s| Self::live_changeable(running, s)).unwrap_or(false);
            let r = ui
                .add_enabled(live, egui::Button::new("Change live"))
                .on_hover_text("send timestep, interaction and bath changes to the running simulation")
                .on_disabled_hover_text("only timestep, cutoff, skin, potential, tail correction, ensemble and temperature change live");
            if r.clicked()
                && let Ok(s) = &built {
                    action = Some(FormAction::ApplyLive(Box::new(s.clone())));
                }
            if ui.add_enabled(unapplied, egui::Button::new("Revert")).on_hover_text("show the running setup again").clicked() {
                action = Some(FormAction::Revert);
            }
        });
        if new_refusal.is_some() {
            self.memory_refusal = new_refusal;
            ui.ctx().request_repaint();
        }
        if built.is_err() || refused.is_some() {
            ui.colored_label(
                palette::ERROR_TEXT,
                "The setup has errors (marked above); the running simulation is unchanged.",
            );
        } else if unapplied {
            ui.weak("Edited: not yet applied.");
        }
        action
    }
}

/// The name, ε, σ and mass fields of a custom species row, with their unit pickers.
fn custom_fields(ui: &mut egui::Ui, i: usize, c: &mut CustomRow) {
    ui.horizontal(|ui| {
        ui.add_space(16.0);
        let l = ui.label("name");
        ui.add(egui::TextEdit::singleline(&mut c.name).desired_width(150.0))
            .labelled_by(l.id);
        let l = ui.label("mass");
        ui.add(egui::TextEdit::singleline(&mut c.mass).desired_width(60.0))
            .labelled_by(l.id);
        ui.label("Da");
    });
    ui.horizontal(|ui| {
        ui.add_space(16.0);
        let l = ui.label("ε");
        ui.add(egui::TextEdit::singleline(&mut c.epsilon).desired_width(60.0))
            .labelled_by(l.id)
            .on_hover_text("well depth: ε/k_B in K, or ε in kJ/mol");
        egui::ComboBox::from_id_salt(("custom epsilon unit", i))
            .selected_text(if c.epsilon_kj_mol { "kJ/mol" } else { "K" })
            .width(60.0)
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut c.epsilon_kj_mol, false, "K");
                ui.selectable_value(&mut c.epsilon_kj_mol, true, "kJ/mol");
            });
        let l = ui.label("σ");
        ui.add(egui::TextEdit::singleline(&mut c.sigma).desired_width(60.0))
            .labelled_by(l.id)
            .on_hover_text("size parameter σ, in Å or nm");
        egui::ComboBox::from_id_salt(("custom sigma unit", i))
            .selected_text(if c.sigma_nm { "nm" } else { "Å" })
            .width(50.0)
            .show_ui(ui, |ui| {
                ui.selectable_value(&mut c.sigma_nm, false, "Å");
                ui.selectable_value(&mut c.sigma_nm, true, "nm");
            });
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    fn argon() -> Setup {
        Setup::parse(include_str!("../../assets/argon-cold-trap.ron"), "argon").unwrap()
    }

    #[test]
    fn round_trips_a_setup() {
        let s = argon();
        assert_eq!(SetupForm::from_setup(&s).build().unwrap(), s);
    }

    #[test]
    fn bad_density_is_attached_to_the_density_field() {
        let mut f = SetupForm::from_setup(&argon());
        f.density.text = "40".into();
        let e = f.build().unwrap_err();
        let msg = e.get("density").expect("a density error");
        assert!(msg.contains("allowed"), "{msg}");
        f.density.text = "abc".into();
        assert!(
            f.build()
                .unwrap_err()
                .get("density")
                .unwrap()
                .contains("not a number")
        );
    }

    #[test]
    fn a_custom_row_builds_a_custom_species_and_its_errors_sit_at_its_fields() {
        let mut f = SetupForm::from_setup(&argon());
        f.species[0].custom = Some(CustomRow::from_species(f.species[0].kind));
        let c = f.species[0].custom.as_mut().unwrap();
        c.name = "argon, 120 K set".into();
        c.epsilon = "120".into();
        c.sigma = "0.34".into();
        c.sigma_nm = true;
        let s = f.build().unwrap();
        let p = s.species[0].kind.params();
        assert_eq!((p.epsilon_kelvin, p.molar_mass), (120.0, 39.948));
        assert!((p.sigma_angstrom - 3.4).abs() < 1e-15);
        // A custom species loaded from a setup comes back as the same row.
        assert_eq!(SetupForm::from_setup(&s).build().unwrap(), s);
        let c = f.species[0].custom.as_mut().unwrap();
        c.epsilon = "-1".into();
        let e = f.build().unwrap_err();
        assert!(
            e.get("species[0].kind.epsilon")
                .unwrap()
                .contains("allowed: ε/k_B from 1 K")
        );
        f.species[0].custom.as_mut().unwrap().mass = "heavy".into();
        let e = f.build().unwrap_err();
        assert!(e.get("species[0].kind.mass").unwrap().contains("not a number"));
    }

    #[test]
    fn live_changes_are_recognised() {
        let s = argon();
        let mut t = s.clone();
        t.timestep = crate::io::setup::Duration::Femtoseconds(2.0);
        assert!(SetupForm::live_changeable(&s, &t));
        t.atoms = 500;
        assert!(!SetupForm::live_changeable(&s, &t));
        assert!(!SetupForm::live_changeable(&s, &s));
    }
}
