//! Starting configurations: composition to whole counts, fcc lattice, Maxwell–Boltzmann velocities.

use super::random::{Purpose, Stream, shuffle};

/// Turns composition shares into whole atom counts that add up to `atoms`.
///
/// Largest-remainder (Hamilton) apportionment; ties go to the species listed first, so the
/// result depends only on the inputs.
pub fn whole_counts(shares: &[f64], atoms: usize) -> Vec<usize> {
    let total: f64 = shares.iter().sum();
    let exact: Vec<f64> = shares.iter().map(|s| s / total * atoms as f64).collect();
    let mut counts: Vec<usize> = exact.iter().map(|x| x.floor() as usize).collect();
    let mut left = atoms - counts.iter().sum::<usize>();
    let mut order: Vec<usize> = (0..shares.len()).collect();
    order.sort_by(|&a, &b| {
        let ra = exact[a] - exact[a].floor();
        let rb = exact[b] - exact[b].floor();
        rb.partial_cmp(&ra)
            .unwrap_or(std::cmp::Ordering::Equal)
            .then(a.cmp(&b))
    });
    for &k in order.iter().cycle() {
        if left == 0 {
            break;
        }
        counts[k] += 1;
        left -= 1;
    }
    counts
}

/// Number of fcc unit cells per edge so that 4n³ ≥ `atoms`.
pub fn fcc_cells_per_edge(atoms: usize) -> usize {
    let mut n = ((atoms as f64 / 4.0).cbrt().floor() as usize).max(1);
    while 4 * n * n * n < atoms {
        n += 1;
    }
    n
}

/// Places `counts[t]` atoms of each type on an fcc lattice filling a cube of edge `box_length`.
///
/// The lattice has the fewest cells with at least N sites. Which sites stay empty and which
/// species sits where are chosen by the seed. Atoms are numbered in lattice order, which keeps
/// neighbours close in memory. Returns positions and type indices.
pub fn fcc_start(counts: &[usize], box_length: f64, seed: u64) -> (Vec<[f64; 3]>, Vec<u8>) {
    let atoms: usize = counts.iter().sum();
    let n = fcc_cells_per_edge(atoms);
    let a = box_length / n as f64;
    let basis = [[0.0, 0.0, 0.0], [0.5, 0.5, 0.0], [0.5, 0.0, 0.5], [0.0, 0.5, 0.5]];
    let sites = 4 * n * n * n;
    // Which sites stay empty (none when the lattice is exactly full).
    let chosen: Option<Vec<usize>> = (sites > atoms).then(|| {
        let mut c: Vec<usize> = (0..sites).collect();
        shuffle(&mut c, &mut Stream::new(seed, Purpose::LatticeSites, 0, 0));
        c.truncate(atoms);
        c.sort_unstable();
        c
    });
    let site_of = |k: usize| chosen.as_ref().map_or(k, |c| c[k]);
    // Quarter-cell offset keeps every atom off the box faces.
    let positions = (0..atoms)
        .map(site_of)
        .map(|s| {
            let cell = s / 4;
            let b = basis[s % 4];
            let (ix, iy, iz) = (cell / (n * n), (cell / n) % n, cell % n);
            [
                (ix as f64 + b[0] + 0.25) * a,
                (iy as f64 + b[1] + 0.25) * a,
                (iz as f64 + b[2] + 0.25) * a,
            ]
        })
        .collect();
    let mut types: Vec<u8> = counts
        .iter()
        .enumerate()
        .flat_map(|(t, &c)| std::iter::repeat_n(t as u8, c))
        .collect();
    if counts.len() > 1 {
        shuffle(&mut types, &mut Stream::new(seed, Purpose::SpeciesOrder, 0, 0));
    }
    (positions, types)
}

/// Maxwell–Boltzmann velocities at `temperature` with zero total momentum, rescaled so that
/// 2K / dof equals `temperature` exactly. Each atom draws from its own random stream.
pub fn maxwell_boltzmann(
    masses: &[f64],
    types: &[u8],
    temperature: f64,
    dof: f64,
    seed: u64,
) -> Vec<[f64; 3]> {
    let mut v: Vec<[f64; 3]> = types
        .iter()
        .enumerate()
        .map(|(i, &t)| {
            let mut s = Stream::new(seed, Purpose::StartVelocities, 0, i as u64);
            let w = (temperature / masses[t as usize]).sqrt();
            [w * s.normal(), w * s.normal(), w * s.normal()]
        })
        .collect();
    let mut p = [0.0; 3];
    let mut total_mass = 0.0;
    for (vi, &t) in v.iter().zip(types) {
        let m = masses[t as usize];
        total_mass += m;
        for k in 0..3 {
            p[k] += m * vi[k];
        }
    }
    let mut twice_k = 0.0;
    for (vi, &t) in v.iter_mut().zip(types) {
        for k in 0..3 {
            vi[k] -= p[k] / total_mass;
        }
        twice_k += masses[t as usize] * (vi[0] * vi[0] + vi[1] * vi[1] + vi[2] * vi[2]);
    }
    let scale = if twice_k > 0.0 {
        (temperature * dof / twice_k).sqrt()
    } else {
        0.0
    };
    for vi in &mut v {
        for x in vi.iter_mut() {
            *x *= scale;
        }
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_add_up_and_follow_shares() {
        assert_eq!(whole_counts(&[1.0], 4000), vec![4000]);
        assert_eq!(whole_counts(&[0.5, 0.5], 7), vec![4, 3]);
        assert_eq!(whole_counts(&[0.2, 0.3, 0.5], 11), vec![2, 3, 6]);
        let c = whole_counts(&[0.333, 0.333, 0.334], 1000);
        assert_eq!(c.iter().sum::<usize>(), 1000);
    }

    #[test]
    fn fcc_start_fills_box_without_overlaps() {
        let (pos, types) = fcc_start(&[300, 200], 9.0, 3);
        assert_eq!(pos.len(), 500);
        assert_eq!(types.iter().filter(|&&t| t == 1).count(), 200);
        assert!(pos.iter().all(|p| p.iter().all(|&x| (0.0..9.0).contains(&x))));
        // 4·5³ = 500 sites, all filled: nearest neighbour distance a/√2.
        let a: f64 = 9.0 / 5.0;
        let mut min = f64::MAX;
        for i in 0..pos.len() {
            for j in 0..i {
                let mut r2 = 0.0;
                for (a, b) in pos[i].iter().zip(&pos[j]) {
                    let mut d = a - b;
                    d -= 9.0 * (d / 9.0).round();
                    r2 += d * d;
                }
                min = min.min(r2);
            }
        }
        assert!((min.sqrt() - a / 2f64.sqrt()).abs() < 1e-12);
    }

    #[test]
    fn start_velocities_have_exact_temperature_and_no_drift() {
        let masses = [1.0, 3.0];
        let types: Vec<u8> = (0..1000).map(|i| (i % 2) as u8).collect();
        let dof = 3.0 * 1000.0 - 3.0;
        let v = maxwell_boltzmann(&masses, &types, 1.3, dof, 5);
        let mut p = [0.0; 3];
        let mut twice_k = 0.0;
        for (vi, &t) in v.iter().zip(&types) {
            let m = masses[t as usize];
            for k in 0..3 {
                p[k] += m * vi[k];
            }
            twice_k += m * (vi[0] * vi[0] + vi[1] * vi[1] + vi[2] * vi[2]);
        }
        assert!(p.iter().all(|x| x.abs() < 1e-10));
        assert!((twice_k / dof - 1.3).abs() < 1e-12);
    }
}
