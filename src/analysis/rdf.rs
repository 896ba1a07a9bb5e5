//! The radial distribution function g(r), for the whole system and for every pair of species,
//! accumulated over configurations, with the running coordination numbers and the potential
//! energy and virial pressure recomputed from it.

use crate::physics::Simulation;
use crate::physics::geometry::separation;
use crate::physics::potential::PairTable;
use std::f64::consts::PI;

/// Histograms of pair distances normalised to g(r): the ratio of the pair density at distance
/// r to that of an ideal gas at the same density (Allen & Tildesley, *Computer Simulation of
/// Liquids*, 2nd ed., 2017, §2.6 and §8.2), for the whole system and for each unordered pair of
/// species (a ≤ b).
///
/// For species a and b with N_a, N_b atoms in a volume V,
/// g_ab(r) = V / (N_a N_b) ⟨Σ_{i∈a} Σ_{j∈b, j≠i} δ(r − r_ij)⟩ / (4π r²), so that
/// Σ_ab x_a x_b g_ab = g, the total.
#[derive(Clone, Debug)]
pub struct RadialDistribution {
    r_max: f64,
    bins: usize,
    /// Species in the histogram (1 when added without types).
    species: usize,
    /// Pair counts, `bins` per unordered species pair in [`pair_index`] order.
    counts: Vec<u64>,
    frames: u64,
    /// Atoms of each species in the last configuration added.
    atoms: Vec<usize>,
    volume: f64,
}

/// One bin of g(r).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RdfPoint {
    /// Bin centre.
    pub r: f64,
    pub g: f64,
    /// Running coordination number: mean neighbours (of the second species of the pair, or of
    /// any species for the total) around an atom (of the first species) within the bin's
    /// outer edge.
    pub coordination: f64,
}

/// Index of the unordered species pair (a, b) among the s(s+1)/2 pairs of `s` species, in the
/// order (0,0), (0,1), …, (0,s−1), (1,1), ….
pub fn pair_index(a: usize, b: usize, s: usize) -> usize {
    let (a, b) = if a <= b { (a, b) } else { (b, a) };
    a * s - a * (a + 1) / 2 + b
}

impl RadialDistribution {
    /// An empty histogram of `bins` bins up to `r_max` for one species.
    pub fn new(r_max: f64, bins: usize) -> Self {
        Self::with_species(r_max, bins, 1)
    }

    /// An empty histogram of `bins` bins up to `r_max` for `species` species.
    pub fn with_species(r_max: f64, bins: usize, species: usize) -> Self {
        let species = species.max(1);
        let bins = bins.max(1);
        RadialDistribution {
            r_max,
            bins,
            species,
            counts: vec![0; bins * species * (species + 1) / 2],
            frames: 0,
            atoms: vec![0; species],
            volume: 0.0,
        }
    }

    /// Upper edge of the histogram.
    pub fn r_max(&self) -> f64 {
        self.r_max
    }

    /// Number of species.
    pub fn species(&self) -> usize {
        self.species
    }

    /// Configurations added so far.
    pub fn frames(&self) -> u64 {
        self.frames
    }

    /// Forgets every configuration added.
    pub fn reset(&mut self) {
        self.counts.iter_mut().for_each(|c| *c = 0);
        self.frames = 0;
    }

    /// Adds one configuration of a single species given as positions in a cubic box of edge
    /// `l` and the unordered pairs to look at (every pair closer than `r_max` must be among
    /// them).
    pub fn add_pairs(
        &mut self,
        positions: &[[f64; 3]],
        l: f64,
        pairs: impl IntoIterator<Item = (usize, usize)>,
    ) {
        let types = vec![0u8; positions.len()];
        self.add_typed_pairs(positions, &types, l, pairs);
    }

    /// Adds one configuration with the species index of each atom (below [`Self::species`]).
    pub fn add_typed_pairs(
        &mut self,
        positions: &[[f64; 3]],
        types: &[u8],
        l: f64,
        pairs: impl IntoIterator<Item = (usize, usize)>,
    ) {
        let (bins, s) = (self.bins, self.species);
        let scale = bins as f64 / self.r_max;
        let r2_max = self.r_max * self.r_max;
        for (i, j) in pairs {
            let r2 = separation(&positions[i], &positions[j], l, 1.0 / l).1;
            if r2 < r2_max {
                let k = ((r2.sqrt() * scale) as usize).min(bins - 1);
                let p = pair_index(types[i] as usize, types[j] as usize, s);
                self.counts[p * bins + k] += 1;
            }
        }
        self.frames += 1;
        self.atoms.iter_mut().for_each(|n| *n = 0);
        for &t in types {
            self.atoms[t as usize] += 1;
        }
        self.volume = l * l * l;
    }

    /// Adds the simulation's present configuration over every pair of atoms (for `r_max` up to
    /// half the box edge; the cost grows as N²).
    pub fn add_every_pair(&mut self, sim: &Simulation) {
        let s = sim.system();
        let n = s.len();
        let pairs = (0..n).flat_map(|i| (i + 1..n).map(move |j| (i, j)));
        self.add_typed_pairs(&s.positions, &s.types, s.box_length, pairs);
    }

    /// Adds the simulation's present configuration, using its neighbour list (so `r_max` must
    /// not exceed the cutoff: beyond it the list is incomplete).
    pub fn add(&mut self, sim: &Simulation) {
        let list = sim.neighbour_list();
        let s = sim.system();
        let n = s.len();
        let pairs = (0..n).flat_map(|i| list.partners(i).iter().map(move |&j| (i, j as usize)));
        self.add_typed_pairs(&s.positions, &s.types, s.box_length, pairs);
    }

    fn edges(&self, k: usize) -> (f64, f64) {
        let dr = self.r_max / self.bins as f64;
        (k as f64 * dr, (k + 1) as f64 * dr)
    }

    fn shell(&self, k: usize) -> f64 {
        let (lo, hi) = self.edges(k);
        4.0 / 3.0 * PI * (hi.powi(3) - lo.powi(3))
    }

    /// g_ab(r) with the coordination number of b around a (a, b in either order for g; the
    /// coordination counts atoms of `b` around an atom of `a`). Empty before any configuration.
    pub fn pair_points(&self, a: usize, b: usize) -> Vec<RdfPoint> {
        let (na, nb) = (self.atoms[a] as f64, self.atoms[b] as f64);
        if self.frames == 0 || na < 1.0 || nb < 1.0 || (a == b && na < 2.0) {
            return Vec::new();
        }
        let p = pair_index(a, b, self.species);
        let counts = &self.counts[p * self.bins..(p + 1) * self.bins];
        // Each unordered pair is stored once; within one species both atoms see it.
        let ordered = if a == b { 2.0 } else { 1.0 };
        let frames = self.frames as f64;
        let mut running = 0.0;
        (0..self.bins)
            .map(|k| {
                let (lo, hi) = self.edges(k);
                let c = ordered * counts[k] as f64 / frames;
                running += c / na;
                RdfPoint {
                    r: 0.5 * (lo + hi),
                    g: c * self.volume / (na * nb * self.shell(k)),
                    coordination: running,
                }
            })
            .collect()
    }

    /// The total g(r) over all pairs of atoms and the mean coordination number of an atom.
    pub fn points(&self) -> Vec<RdfPoint> {
        let n: usize = self.atoms.iter().sum();
        if self.frames == 0 || n < 2 {
            return Vec::new();
        }
        let n = n as f64;
        let frames = self.frames as f64;
        let pairs = self.species * (self.species + 1) / 2;
        let mut running = 0.0;
        (0..self.bins)
            .map(|k| {
                let (lo, hi) = self.edges(k);
                let c: u64 = (0..pairs).map(|p| self.counts[p * self.bins + k]).sum();
                let per_atom = 2.0 * c as f64 / (frames * n);
                running += per_atom;
                RdfPoint {
                    r: 0.5 * (lo + hi),
                    g: per_atom * self.volume / (n * self.shell(k)),
                    coordination: running,
                }
            })
            .collect()
    }

    /// Σ over ordered species pairs (a, b) of x_a x_b ∫ g_ab(r) f_ab(r) 4πr² dr, where each bin's
    /// g is taken as constant and f is averaged over the bin's shell volume (Simpson's rule on
    /// 8 sub-intervals).
    fn weighted_integral(&self, f: impl Fn(usize, usize, f64) -> f64) -> f64 {
        let n: usize = self.atoms.iter().sum();
        let mut total = 0.0;
        for a in 0..self.species {
            for b in 0..self.species {
                let g = self.pair_points(a, b);
                if g.is_empty() {
                    continue;
                }
                let x = self.atoms[a] as f64 * self.atoms[b] as f64 / (n as f64 * n as f64);
                for (k, p) in g.iter().enumerate() {
                    if p.g == 0.0 {
                        continue;
                    }
                    let (lo, hi) = self.edges(k);
                    let h = (hi - lo) / 8.0;
                    let mut s = 0.0;
                    for m in 0..=8 {
                        let r = lo + m as f64 * h;
                        let w = if m == 0 || m == 8 {
                            1.0
                        } else if m % 2 == 1 {
                            4.0
                        } else {
                            2.0
                        };
                        s += w * f(a, b, r) * 4.0 * PI * r * r;
                    }
                    total += x * p.g * s * h / 3.0;
                }
            }
        }
        total
    }

    /// Potential energy per atom recomputed from the g(r)s with the pair energies of `table`
    /// (its mode, no tail correction): u = (ρ/2) Σ_ab x_a x_b ∫ g_ab u_ab 4πr² dr
    /// (Allen & Tildesley 2017, §2.6, eq. 2.102 generalised to mixtures).
    pub fn potential_energy_per_atom(&self, table: &PairTable) -> f64 {
        let rho = self.atoms.iter().sum::<usize>() as f64 / self.volume;
        let rc2 = table.cutoff2();
        let u = |a: usize, b: usize, r: f64| {
            if r > 0.0 && r * r < rc2 {
                table.evaluate(a, b, r * r).0
            } else {
                0.0
            }
        };
        0.5 * rho * self.weighted_integral(u)
    }

    /// The excess (virial) pressure recomputed from the g(r)s with the forces of `table`:
    /// p_ex = (ρ²/6) Σ_ab x_a x_b ∫ g_ab r F_ab(r) 4πr² dr (Allen & Tildesley 2017, §2.6,
    /// eq. 2.103 generalised to mixtures). Add ρT for the whole virial pressure.
    pub fn excess_pressure(&self, table: &PairTable) -> f64 {
        let rho = self.atoms.iter().sum::<usize>() as f64 / self.volume;
        let rc2 = table.cutoff2();
        let w = |a: usize, b: usize, r: f64| {
            if r > 0.0 && r * r < rc2 {
                table.evaluate(a, b, r * r).1 * r * r
            } else {
                0.0
            }
        };
        rho * rho / 6.0 * self.weighted_integral(w)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::physics::random::{Purpose, Stream};

    #[test]
    fn uniform_points_give_g_of_one() {
        // An ideal gas (uncorrelated uniform points) has g(r) = 1 at every r, up to
        // counting noise and the (N−1)/N finite-size factor.
        let (n, l) = (600usize, 10.0);
        let mut rdf = RadialDistribution::new(4.0, 8);
        let mut s = Stream::new(9, Purpose::LatticeSites, 0, 0);
        for _ in 0..40 {
            let pos: Vec<[f64; 3]> = (0..n)
                .map(|_| [s.uniform() * l, s.uniform() * l, s.uniform() * l])
                .collect();
            let pairs = (0..n).flat_map(|i| (i + 1..n).map(move |j| (i, j)));
            rdf.add_pairs(&pos, l, pairs);
        }
        for p in rdf.points().iter().skip(2) {
            assert!((p.g - 1.0).abs() < 0.05, "{p:?}");
        }
    }

    #[test]
    fn uniform_mixture_gives_g_of_one_for_every_pair_and_the_total_as_their_mixing_sum() {
        let (n, l) = (600usize, 10.0);
        let mut rdf = RadialDistribution::with_species(4.0, 8, 2);
        let mut s = Stream::new(3, Purpose::LatticeSites, 0, 0);
        let types: Vec<u8> = (0..n).map(|i| u8::from(i % 3 == 0)).collect();
        for _ in 0..40 {
            let pos: Vec<[f64; 3]> = (0..n)
                .map(|_| [s.uniform() * l, s.uniform() * l, s.uniform() * l])
                .collect();
            let pairs = (0..n).flat_map(|i| (i + 1..n).map(move |j| (i, j)));
            rdf.add_typed_pairs(&pos, &types, l, pairs);
        }
        let x = [400.0 / 600.0, 200.0 / 600.0];
        let total = rdf.points();
        let g = |a, b| rdf.pair_points(a, b);
        let (g00, g01, g11) = (g(0, 0), g(0, 1), g(1, 1));
        for k in 2..8 {
            for p in [g00[k], g01[k], g11[k]] {
                assert!((p.g - 1.0).abs() < 0.08, "{p:?}");
            }
            let mix = x[0] * x[0] * g00[k].g + 2.0 * x[0] * x[1] * g01[k].g + x[1] * x[1] * g11[k].g;
            assert!(
                (mix - total[k].g).abs() < 1e-12,
                "bin {k}: {mix} vs {}",
                total[k].g
            );
        }
        // Coordination of species 1 around species 0 plus of 0 around 0 is the total's.
        let (c00, c01) = (g00[7].coordination, g01[7].coordination);
        let c10 = g(1, 0)[7].coordination;
        let both = x[0] * (c00 + c01) + x[1] * (c10 + g11[7].coordination);
        assert!((both - total[7].coordination).abs() < 1e-9);
    }

    #[test]
    fn pair_indices_cover_the_triangle_once() {
        let s = 4;
        let mut seen = vec![false; s * (s + 1) / 2];
        for a in 0..s {
            for b in a..s {
                let p = pair_index(a, b, s);
                assert!(!seen[p]);
                seen[p] = true;
                assert_eq!(p, pair_index(b, a, s));
            }
        }
        assert!(seen.iter().all(|&x| x));
    }

    #[test]
    fn fcc_lattice_has_twelve_nearest_neighbours() {
        // fcc: 12 neighbours at a/√2, the next 6 at a (crystallography, e.g. Kittel, Introduction
        // to Solid State Physics, ch. 1).
        let (pos, _) = crate::physics::lattice::fcc_start(&[500], 9.0, 1);
        let a: f64 = 9.0 / 5.0;
        let mut rdf = RadialDistribution::new(0.5 * (a / 2f64.sqrt() + a), 50);
        let n = pos.len();
        rdf.add_pairs(&pos, 9.0, (0..n).flat_map(|i| (i + 1..n).map(move |j| (i, j))));
        let last = rdf.points().last().copied().unwrap();
        assert!((last.coordination - 12.0).abs() < 1e-9, "{last:?}");
        let peak = rdf
            .points()
            .into_iter()
            .max_by(|x, y| x.g.total_cmp(&y.g))
            .unwrap();
        assert!((peak.r - a / 2f64.sqrt()).abs() < rdf.r_max() / 50.0, "{peak:?}");
    }
}
