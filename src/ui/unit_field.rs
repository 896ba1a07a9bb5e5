//! A number with a unit picker. Picking another unit converts the number, and the field shows
//! what its value is in the other unit system ("5 fs = 0.00181 τ").

use crate::io::setup::{Density, Duration, Length, Rate, Setup, SetupError, Temperature};

/// The number formatter of fields and tables (kept here for the form's callers).
pub use crate::io::numbers::format_number;

/// A kind of quantity the form edits, with its units.
pub trait Quantity: Copy + std::fmt::Debug + PartialEq + 'static {
    /// The setup-file value (e.g. [`Density`]).
    type Value: Copy + std::fmt::Debug;
    /// Every unit, in picker order.
    fn units() -> &'static [Self];
    /// Unit symbol shown in the picker.
    fn symbol(self) -> &'static str;
    /// Whether this is the reduced (Lennard-Jones) unit.
    fn is_reduced(self) -> bool;
    /// The setup value of `v` in this unit.
    fn make(self, v: f64) -> Self::Value;
    /// Unit and number of a setup value.
    fn split(v: Self::Value) -> (Self, f64);
    /// The reduced number of a setup value under `setup`'s reference species.
    fn reduce(setup: &Setup, v: Self::Value) -> Result<f64, SetupError>;
}

/// Units of density.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum DensityUnit {
    GramsPerCubicCentimetre,
    KilogramsPerCubicMetre,
    PerCubicNanometre,
    Reduced,
}

impl Quantity for DensityUnit {
    type Value = Density;
    fn units() -> &'static [Self] {
        &[
            Self::GramsPerCubicCentimetre,
            Self::KilogramsPerCubicMetre,
            Self::PerCubicNanometre,
            Self::Reduced,
        ]
    }
    fn symbol(self) -> &'static str {
        match self {
            Self::GramsPerCubicCentimetre => "g/cm³",
            Self::KilogramsPerCubicMetre => "kg/m³",
            Self::PerCubicNanometre => "atoms/nm³",
            Self::Reduced => "ρσ³",
        }
    }
    fn is_reduced(self) -> bool {
        self == Self::Reduced
    }
    fn make(self, v: f64) -> Density {
        match self {
            Self::GramsPerCubicCentimetre => Density::GramsPerCubicCentimetre(v),
            Self::KilogramsPerCubicMetre => Density::KilogramsPerCubicMetre(v),
            Self::PerCubicNanometre => Density::PerCubicNanometre(v),
            Self::Reduced => Density::Reduced(v),
        }
    }
    fn split(v: Density) -> (Self, f64) {
        match v {
            Density::GramsPerCubicCentimetre(x) => (Self::GramsPerCubicCentimetre, x),
            Density::KilogramsPerCubicMetre(x) => (Self::KilogramsPerCubicMetre, x),
            Density::PerCubicNanometre(x) => (Self::PerCubicNanometre, x),
            Density::Reduced(x) => (Self::Reduced, x),
        }
    }
    fn reduce(setup: &Setup, v: Density) -> Result<f64, SetupError> {
        setup.reduced_density(v)
    }
}

/// Units of temperature.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TemperatureUnit {
    Kelvin,
    Reduced,
}

impl Quantity for TemperatureUnit {
    type Value = Temperature;
    fn units() -> &'static [Self] {
        &[Self::Kelvin, Self::Reduced]
    }
    fn symbol(self) -> &'static str {
        match self {
            Self::Kelvin => "K",
            Self::Reduced => "kT/ε",
        }
    }
    fn is_reduced(self) -> bool {
        self == Self::Reduced
    }
    fn make(self, v: f64) -> Temperature {
        match self {
            Self::Kelvin => Temperature::Kelvin(v),
            Self::Reduced => Temperature::Reduced(v),
        }
    }
    fn split(v: Temperature) -> (Self, f64) {
        match v {
            Temperature::Kelvin(x) => (Self::Kelvin, x),
            Temperature::Reduced(x) => (Self::Reduced, x),
        }
    }
    fn reduce(setup: &Setup, v: Temperature) -> Result<f64, SetupError> {
        setup.reduced_temperature("temperature", v)
    }
}

/// Units of time.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TimeUnit {
    Femtoseconds,
    Picoseconds,
    Reduced,
}

impl Quantity for TimeUnit {
    type Value = Duration;
    fn units() -> &'static [Self] {
        &[Self::Femtoseconds, Self::Picoseconds, Self::Reduced]
    }
    fn symbol(self) -> &'static str {
        match self {
            Self::Femtoseconds => "fs",
            Self::Picoseconds => "ps",
            Self::Reduced => "τ",
        }
    }
    fn is_reduced(self) -> bool {
        self == Self::Reduced
    }
    fn make(self, v: f64) -> Duration {
        match self {
            Self::Femtoseconds => Duration::Femtoseconds(v),
            Self::Picoseconds => Duration::Picoseconds(v),
            Self::Reduced => Duration::Reduced(v),
        }
    }
    fn split(v: Duration) -> (Self, f64) {
        match v {
            Duration::Femtoseconds(x) => (Self::Femtoseconds, x),
            Duration::Picoseconds(x) => (Self::Picoseconds, x),
            Duration::Reduced(x) => (Self::Reduced, x),
        }
    }
    fn reduce(setup: &Setup, v: Duration) -> Result<f64, SetupError> {
        setup.reduced_duration("time", v)
    }
}

/// Units of length.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum LengthUnit {
    Angstrom,
    Sigma,
}

impl Quantity for LengthUnit {
    type Value = Length;
    fn units() -> &'static [Self] {
        &[Self::Angstrom, Self::Sigma]
    }
    fn symbol(self) -> &'static str {
        match self {
            Self::Angstrom => "Å",
            Self::Sigma => "σ",
        }
    }
    fn is_reduced(self) -> bool {
        self == Self::Sigma
    }
    fn make(self, v: f64) -> Length {
        match self {
            Self::Angstrom => Length::Angstrom(v),
            Self::Sigma => Length::Sigma(v),
        }
    }
    fn split(v: Length) -> (Self, f64) {
        match v {
            Length::Angstrom(x) => (Self::Angstrom, x),
            Length::Sigma(x) => (Self::Sigma, x),
        }
    }
    fn reduce(setup: &Setup, v: Length) -> Result<f64, SetupError> {
        setup.reduced_length("length", v)
    }
}

/// Units of a rate (Langevin friction).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RateUnit {
    PerPicosecond,
    Reduced,
}

impl Quantity for RateUnit {
    type Value = Rate;
    fn units() -> &'static [Self] {
        &[Self::PerPicosecond, Self::Reduced]
    }
    fn symbol(self) -> &'static str {
        match self {
            Self::PerPicosecond => "1/ps",
            Self::Reduced => "1/τ",
        }
    }
    fn is_reduced(self) -> bool {
        self == Self::Reduced
    }
    fn make(self, v: f64) -> Rate {
        match self {
            Self::PerPicosecond => Rate::PerPicosecond(v),
            Self::Reduced => Rate::Reduced(v),
        }
    }
    fn split(v: Rate) -> (Self, f64) {
        match v {
            Rate::PerPicosecond(x) => (Self::PerPicosecond, x),
            Rate::Reduced(x) => (Self::Reduced, x),
        }
    }
    fn reduce(setup: &Setup, v: Rate) -> Result<f64, SetupError> {
        setup.reduced_rate("rate", v)
    }
}

/// The text and unit of one unit-bearing field.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitField<Q: Quantity> {
    /// What the user typed.
    pub text: String,
    /// The unit picked.
    pub unit: Q,
    /// The full-precision value behind `text` when the text was written by a conversion (so
    /// converting back and forth does not accumulate rounding); ignored once the text is edited.
    exact: Option<(f64, String)>,
}

impl<Q: Quantity> UnitField<Q> {
    /// A field showing a setup value.
    pub fn from_value(v: Q::Value) -> Self {
        let (unit, x) = Q::split(v);
        let text = format_number(x);
        UnitField {
            exact: Some((x, text.clone())),
            text,
            unit,
        }
    }

    /// Shows `v` in the field's present unit, converted through reduced units of `setup` (as
    /// is, in its own unit, if it is in that unit already or cannot be converted).
    pub fn show_value(&mut self, setup: &Setup, v: Q::Value) {
        let unit = self.unit;
        *self = Self::from_value(v);
        if self.unit != unit
            && let (Ok(r), Ok(per)) = (Q::reduce(setup, v), Q::reduce(setup, unit.make(1.0)))
            && per != 0.0
        {
            let x = r / per;
            self.text = format_number(x);
            self.exact = Some((x, self.text.clone()));
            self.unit = unit;
        }
    }

    /// The typed number, or a message naming the field and the problem.
    pub fn number(&self, field: &str) -> Result<f64, String> {
        if let Some((v, shown)) = &self.exact
            && *shown == self.text
        {
            return Ok(*v);
        }
        let t = self.text.trim();
        match t.parse::<f64>() {
            Ok(x) if x.is_finite() => Ok(x),
            _ => Err(format!(
                "{field}: \"{t}\" is not a number; type a decimal number such as 1.25"
            )),
        }
    }

    /// The setup value of the field.
    pub fn value(&self, field: &str) -> Result<Q::Value, String> {
        Ok(self.unit.make(self.number(field)?))
    }

    /// Switches to `unit`, converting the number through reduced units of `setup`.
    /// If the number or the conversion is invalid, only the unit changes.
    pub fn set_unit(&mut self, setup: &Setup, unit: Q) {
        if unit == self.unit {
            return;
        }
        if let Ok(x) = self.number("")
            && let (Ok(r), Ok(per)) = (
                Q::reduce(setup, self.unit.make(x)),
                Q::reduce(setup, unit.make(1.0)),
            )
            && per != 0.0
        {
            let v = r / per;
            self.text = format_number(v);
            self.exact = Some((v, self.text.clone()));
        }
        self.unit = unit;
    }

    /// "= 0.00181 τ" (for a real unit) or "= 5 fs" (for the reduced unit), if convertible.
    pub fn equivalent(&self, setup: &Setup) -> Option<String> {
        let x = self.number("").ok()?;
        let other = if self.unit.is_reduced() {
            *Q::units().iter().find(|u| !u.is_reduced())?
        } else {
            *Q::units().iter().find(|u| u.is_reduced())?
        };
        let r = Q::reduce(setup, self.unit.make(x)).ok()?;
        let per = Q::reduce(setup, other.make(1.0)).ok()?;
        Some(format!("= {} {}", format_number(r / per), other.symbol()))
    }

    /// Draws the text box and the unit picker; returns whether anything changed.
    pub fn show(&mut self, ui: &mut egui::Ui, label: &str, setup: &Setup) -> bool {
        let mut changed = false;
        let real = setup.units().has_real_units();
        ui.horizontal(|ui| {
            let l = ui.label(label);
            let r = ui
                .add(egui::TextEdit::singleline(&mut self.text).desired_width(80.0))
                .labelled_by(l.id);
            changed |= r.changed();
            let mut picked = self.unit;
            egui::ComboBox::from_id_salt(("unit", label))
                .selected_text(self.unit.symbol())
                .width(78.0)
                .show_ui(ui, |ui| {
                    for &u in Q::units() {
                        ui.add_enabled_ui(real || u.is_reduced(), |ui| {
                            ui.selectable_value(&mut picked, u, u.symbol());
                        });
                    }
                })
                .response
                .on_hover_text(format!("unit of {label}"))
                .widget_info(|| {
                    egui::WidgetInfo::labeled(egui::Role::ComboBox, true, format!("unit of {label}"))
                });
            if picked != self.unit {
                self.set_unit(setup, picked);
                changed = true;
            }
            if real && let Some(eq) = self.equivalent(setup) {
                ui.weak(eq);
            }
        });
        changed
    }
}
