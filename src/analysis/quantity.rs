//! The five thermodynamic quantities whose equilibration and precision are followed.

use crate::physics::Observables;
use serde::{Deserialize, Serialize};

/// A followed quantity; values in reduced units, energies per atom.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
pub enum Quantity {
    Temperature,
    Pressure,
    PotentialEnergy,
    TotalEnergy,
    /// Total energy minus the heat a thermostat took out; constant in exact dynamics.
    ConservedEnergy,
    /// Potential energy per atom of the full, untruncated potential (estimate; see
    /// `Observables::full_potential`): the residual energy the equation of state gives.
    FullPotentialEnergy,
    /// Pressure of the full, untruncated potential (estimate).
    FullPressure,
}

/// Number of quantities kept ([`Quantity::ALL`]).
pub const QUANTITIES: usize = 7;

impl Quantity {
    /// All quantities kept, in the order tables and files list them.
    pub const ALL: [Quantity; QUANTITIES] = [
        Quantity::Temperature,
        Quantity::Pressure,
        Quantity::PotentialEnergy,
        Quantity::TotalEnergy,
        Quantity::ConservedEnergy,
        Quantity::FullPotentialEnergy,
        Quantity::FullPressure,
    ];

    /// The five quantities of the run itself, as `summary.json`'s `quantities` lists them (the
    /// full-potential estimates go with the equation of state).
    pub const FOLLOWED: [Quantity; 5] = [
        Quantity::Temperature,
        Quantity::Pressure,
        Quantity::PotentialEnergy,
        Quantity::TotalEnergy,
        Quantity::ConservedEnergy,
    ];

    /// Position in [`Quantity::ALL`].
    pub fn index(self) -> usize {
        self as usize
    }

    /// The key of this quantity in `summary.json` (and on the command line).
    pub fn key(self) -> &'static str {
        match self {
            Quantity::Temperature => "temperature",
            Quantity::Pressure => "pressure",
            Quantity::PotentialEnergy => "potential_energy_per_atom",
            Quantity::TotalEnergy => "total_energy_per_atom",
            Quantity::ConservedEnergy => "conserved_energy_per_atom",
            Quantity::FullPotentialEnergy => "full_potential_energy_per_atom",
            Quantity::FullPressure => "full_pressure",
        }
    }

    /// A label for tables.
    pub fn label(self) -> &'static str {
        match self {
            Quantity::Temperature => "Temperature",
            Quantity::Pressure => "Pressure",
            Quantity::PotentialEnergy => "Potential energy / atom",
            Quantity::TotalEnergy => "Total energy / atom",
            Quantity::ConservedEnergy => "Conserved energy / atom",
            Quantity::FullPotentialEnergy => "Potential energy / atom, full potential",
            Quantity::FullPressure => "Pressure, full potential",
        }
    }

    /// The quantity named `name`: its key, or a short form (`pressure`, `potential_energy`,
    /// `pe`, `total_energy`, `conserved_energy`, `temperature`, `t`, `p`), any case.
    pub fn from_name(name: &str) -> Option<Quantity> {
        let n = name.trim().to_ascii_lowercase().replace(['-', ' '], "_");
        Quantity::ALL.into_iter().find(|q| {
            n == q.key()
                || match q {
                    Quantity::Temperature => n == "t",
                    Quantity::Pressure => n == "p",
                    Quantity::PotentialEnergy => n == "potential_energy" || n == "pe",
                    Quantity::TotalEnergy => n == "total_energy",
                    Quantity::ConservedEnergy => n == "conserved_energy",
                    Quantity::FullPotentialEnergy | Quantity::FullPressure => false,
                }
        })
    }

    /// This quantity's value in a sample.
    pub fn of(self, o: &Observables) -> f64 {
        match self {
            Quantity::Temperature => o.temperature,
            Quantity::Pressure => o.pressure,
            Quantity::PotentialEnergy => o.potential,
            Quantity::TotalEnergy => o.total,
            Quantity::ConservedEnergy => o.conserved,
            Quantity::FullPotentialEnergy => o.full_potential,
            Quantity::FullPressure => o.full_pressure,
        }
    }

    /// True for the quantities that relax towards equilibrium and so decide the overall verdict:
    /// temperature, pressure and potential energy always, total energy only when a bath holds
    /// the temperature (in NVE it is conserved). The conserved energy is followed for drift but
    /// never decides whether the system has equilibrated; the full-potential estimates follow
    /// potential energy and pressure and add nothing to the verdict.
    pub fn relaxes(self, thermostatted: bool) -> bool {
        match self {
            Quantity::Temperature | Quantity::Pressure | Quantity::PotentialEnergy => true,
            Quantity::TotalEnergy => thermostatted,
            Quantity::ConservedEnergy | Quantity::FullPotentialEnergy | Quantity::FullPressure => false,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip_and_short_forms_are_understood() {
        for q in Quantity::FOLLOWED {
            assert_eq!(Quantity::from_name(q.key()), Some(q));
            assert_eq!(Quantity::ALL[q.index()], q);
        }
        assert_eq!(Quantity::from_name("Pressure"), Some(Quantity::Pressure));
        assert_eq!(
            Quantity::from_name("potential-energy"),
            Some(Quantity::PotentialEnergy)
        );
        assert_eq!(Quantity::from_name("volume"), None);
    }
}
