//! The state of the atoms: structure-of-arrays positions, velocities, forces and species.

use super::geometry::fold;
use super::parallel::ordered_sum;
use super::species::Species;

/// Atoms in a cubic periodic box, in reduced units.
///
/// Positions are *unwrapped*: atoms that leave the box keep their coordinate, and every distance
/// is taken by the minimum-image rule, so displacements (and mean squared displacement) need no
/// image bookkeeping.
#[derive(Clone, Debug)]
pub struct System {
    /// Edge of the cubic box.
    pub box_length: f64,
    pub positions: Vec<[f64; 3]>,
    pub velocities: Vec<[f64; 3]>,
    pub forces: Vec<[f64; 3]>,
    /// Species index of each atom into `kinds`.
    pub types: Vec<u8>,
    /// The species behind each type index.
    pub kinds: Vec<Species>,
    /// Mass of each type (reference species = 1).
    pub masses: Vec<f64>,
}

impl System {
    /// Number of atoms.
    pub fn len(&self) -> usize {
        self.positions.len()
    }

    /// Whether there are no atoms.
    pub fn is_empty(&self) -> bool {
        self.positions.is_empty()
    }

    /// Box volume.
    pub fn volume(&self) -> f64 {
        self.box_length.powi(3)
    }

    /// Number density N/V.
    pub fn density(&self) -> f64 {
        self.len() as f64 / self.volume()
    }

    /// Mass of atom `i`.
    #[inline]
    pub fn mass(&self, i: usize) -> f64 {
        self.masses[self.types[i] as usize]
    }

    /// Mole fraction of each type.
    pub fn fractions(&self) -> Vec<f64> {
        let mut counts = vec![0usize; self.kinds.len()];
        for &t in &self.types {
            counts[t as usize] += 1;
        }
        counts.iter().map(|&c| c as f64 / self.len() as f64).collect()
    }

    /// Total momentum Σ m v.
    pub fn momentum(&self) -> [f64; 3] {
        let mut p = [0.0; 3];
        for (i, v) in self.velocities.iter().enumerate() {
            let m = self.mass(i);
            for k in 0..3 {
                p[k] += m * v[k];
            }
        }
        p
    }

    /// Kinetic energy of atom `i`.
    #[inline]
    pub fn kinetic_of(&self, i: usize) -> f64 {
        kinetic_of(&self.velocities, &self.types, &self.masses, i)
    }

    /// Total kinetic energy, summed in fixed chunks so the result does not depend on threads.
    pub fn kinetic_energy(&self) -> f64 {
        kinetic_energy(&self.velocities, &self.types, &self.masses)
    }

    /// Position of atom `i` folded into the primary box [0, L)³.
    pub fn wrapped(&self, i: usize) -> [f64; 3] {
        let l = self.box_length;
        let p = self.positions[i];
        [fold(p[0], l), fold(p[1], l), fold(p[2], l)]
    }
}

/// Kinetic energy ½ m v² of atom `i`, over the arrays of a [`System`].
#[inline]
pub fn kinetic_of(velocities: &[[f64; 3]], types: &[u8], masses: &[f64], i: usize) -> f64 {
    let v = velocities[i];
    0.5 * masses[types[i] as usize] * (v[0] * v[0] + v[1] * v[1] + v[2] * v[2])
}

/// Total kinetic energy over the arrays of a [`System`], summed in fixed chunks so the result
/// does not depend on threads (the step's stages use this on the slices they hold).
pub fn kinetic_energy(velocities: &[[f64; 3]], types: &[u8], masses: &[f64]) -> f64 {
    ordered_sum(velocities.len(), |i| kinetic_of(velocities, types, masses, i))
}
