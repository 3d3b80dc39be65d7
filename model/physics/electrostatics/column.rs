//! Finite-radius charged column over a conducting ground.
//!
//! Each cell is a uniformly charged cylinder segment of radius R between its
//! faces a and b; the conducting ground is represented by the mirror charge
//! -rho between -b and -a (method of images). On the axis, integrating the
//! field of a uniformly charged disk, E = s/(2 eps0) (1 - h/sqrt(h^2 + R^2))
//! sign(h) (textbook electrostatics, e.g. Griffiths, Introduction to
//! Electrodynamics, Problem 2.6 for the disk; problem number from memory),
//! over the segment gives
//!   E_z(z) = rho/(2 eps0) [ |z-a| - |z-b| - sqrt((z-a)^2+R^2) + sqrt((z-b)^2+R^2) ]
//! and the potential of the disk, s/(2 eps0) (sqrt(h^2+R^2) - |h|), gives
//!   phi(z) = rho/(2 eps0) [F(z-a) - F(z-b)],
//!   F(u) = (u sqrt(u^2+R^2) + R^2 asinh(u/R) - u|u|) / 2.
//! Both are linear in rho. On the uniform grid the response at target i to
//! unit charge in cell j depends on i - j alone, and that of its image on
//! i + j alone, so the solver keeps four short response vectors (a Toeplitz
//! and a Hankel part for potential and field, about 4n values in all) and
//! each step sums the responses over the charged cells (cells without charge
//! cost nothing). Two n x n matrices of the summed responses would save one
//! subtraction per term, but at n = 160 they fill 0.4 MiB of cache: measured
//! on a 2-core machine, two runs side by side then kept about 88 % of their
//! single speed against about 98 % with the vectors (docs/performance.md).
//! The field tends to the planar field-free-top solution as R grows.
//!
//! With conducting air every cell holds some charge, and the direct sum
//! costs O(n^2) per solve. From [`FFT_FROM`] cells the sums are done as
//! convolutions by FFT (O(n log n)): with rho' the reversed charge,
//! phi_i = sum_j rho_j P(i - j) - sum_j rho_j I(i + j) = (rho * P - rho' * I)
//! at index i + n - 1 (both parts line up there). The charge and its
//! reverse share one forward transform (as real and imaginary parts), and
//! phi and E_z share one inverse transform; transforms of any length of at
//! least 2n leave the needed indices free of wrap-around, and the length is
//! the next with prime factors 2, 3 and 5 only. The result equals the direct
//! sum to round-off (tests/analytic_electrostatics.rs).

use crate::grid::Grid;
use crate::physics::constants::EPSILON_0;
use ndarray::Array1;
use rustfft::num_complex::Complex64;
use rustfft::{Fft, FftPlanner};
use std::sync::{Arc, Mutex};

/// Cells from which the solve uses FFT convolutions (below, the direct sum
/// is within about 2 % of it; at 320 cells the FFT is 5 % faster over a
/// whole run: measured, docs/performance.md).
pub const FFT_FROM: usize = 256;

/// The FFT parts of the solver: plans, the kernels' spectra and work
/// buffers (reused, so a solve allocates nothing).
struct Spectral {
    len: usize,
    forward: Arc<dyn Fft<f64>>,
    inverse: Arc<dyn Fft<f64>>,
    /// Spectra of the direct and image responses, potential and field.
    pd: Vec<Complex64>,
    pi: Vec<Complex64>,
    fd: Vec<Complex64>,
    fi: Vec<Complex64>,
    work: Mutex<Buffers>,
}

struct Buffers {
    /// The charge (real part) and its reverse (imaginary part), then their
    /// joint spectrum.
    rho: Vec<Complex64>,
    out: Vec<Complex64>,
    scratch: Vec<Complex64>,
}

impl std::fmt::Debug for Spectral {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "Spectral {{ len: {} }}", self.len)
    }
}

impl Clone for Spectral {
    fn clone(&self) -> Self {
        let (len, scratch) = {
            let b = self.work.lock().unwrap_or_else(|p| p.into_inner());
            (b.rho.len(), b.scratch.len())
        };
        let zero = Complex64::new(0.0, 0.0);
        Spectral {
            len: self.len,
            forward: Arc::clone(&self.forward),
            inverse: Arc::clone(&self.inverse),
            pd: self.pd.clone(),
            pi: self.pi.clone(),
            fd: self.fd.clone(),
            fi: self.fi.clone(),
            work: Mutex::new(Buffers {
                rho: vec![zero; len],
                out: vec![zero; len],
                scratch: vec![zero; scratch],
            }),
        }
    }
}

impl Spectral {
    fn new(pd: &[f64], pi: &[f64], fd: &[f64], fi: &[f64], n: usize) -> Self {
        // The linear convolutions of n charges with kernels of 2n entries
        // are 3n - 1 long; the outputs read (indices n - 1 to 2n - 1) are
        // free of wrap-around for any circular length of at least 2n, and a
        // length with only the factors 2, 3 and 5 keeps the FFT fast.
        let len = smooth_length(2 * n);
        let mut planner = FftPlanner::<f64>::new();
        let forward = planner.plan_fft_forward(len);
        let inverse = planner.plan_fft_inverse(len);
        let scratch_len = forward
            .get_inplace_scratch_len()
            .max(inverse.get_inplace_scratch_len());
        let zero = Complex64::new(0.0, 0.0);
        let mut scratch = vec![zero; scratch_len];
        let mut spectrum = |k: &[f64]| {
            let mut v: Vec<Complex64> = k.iter().map(|&x| Complex64::new(x, 0.0)).collect();
            v.resize(len, zero);
            forward.process_with_scratch(&mut v, &mut scratch);
            v
        };
        let (pd, pi, fd, fi) = (spectrum(pd), spectrum(pi), spectrum(fd), spectrum(fi));
        Spectral {
            len,
            forward,
            inverse,
            pd,
            pi,
            fd,
            fi,
            work: Mutex::new(Buffers {
                rho: vec![zero; len],
                out: vec![zero; len],
                scratch,
            }),
        }
    }

    /// phi at centres and E_z on faces by FFT convolution.
    fn solve(&self, rho: &[f64], phi: &mut [f64], e: &mut [f64]) {
        // Two real sequences per complex FFT (common practice, e.g. Press et
        // al., Numerical Recipes, 3rd ed., sec. 12.3): the charge and its
        // reverse go in as real and imaginary parts of one forward
        // transform, and the potential and the field come out as real and
        // imaginary parts of one inverse transform. Two FFTs instead of four.
        let n = rho.len();
        let len = self.len;
        let zero = Complex64::new(0.0, 0.0);
        let mut guard = self.work.lock().unwrap_or_else(|p| p.into_inner());
        let b = &mut *guard;
        b.rho.fill(zero);
        for (j, &r) in rho.iter().enumerate() {
            b.rho[j].re = r;
            b.rho[n - 1 - j].im = r;
        }
        self.forward
            .process_with_scratch(&mut b.rho, &mut b.scratch);
        // Z = R + i V with R, V the spectra of the real sequences: R[k] =
        // (Z[k] + conj Z[-k])/2, V[k] = (Z[k] - conj Z[-k])/(2i).
        for k in 0..len {
            let z = b.rho[k];
            let zc = b.rho[(len - k) % len].conj();
            let r = (z + zc) * 0.5;
            let v = (z - zc) * Complex64::new(0.0, -0.5);
            let potential = r * self.pd[k] - v * self.pi[k];
            let field = r * self.fd[k] - v * self.fi[k];
            b.out[k] = potential + Complex64::new(0.0, 1.0) * field;
        }
        self.inverse
            .process_with_scratch(&mut b.out, &mut b.scratch);
        let scale = 1.0 / len as f64;
        for (i, d) in phi.iter_mut().enumerate() {
            *d = b.out[i + n - 1].re * scale;
        }
        for (i, d) in e.iter_mut().enumerate() {
            *d = b.out[i + n - 1].im * scale;
        }
    }
}

/// The smallest number at least `min` whose only prime factors are 2, 3
/// and 5.
pub fn smooth_length(min: usize) -> usize {
    let mut len = min.max(1);
    loop {
        let mut m = len;
        for p in [2, 3, 5] {
            while m % p == 0 {
                m /= p;
            }
        }
        if m == 1 {
            return len;
        }
        len += 1;
    }
}

/// On-axis E_z (V m-1) at height `z` of a cylinder between `a` and `b`
/// (m, a < b) of radius `r` (m) holding unit charge density (1 C m-3).
/// Written without cancellation between large terms.
pub fn cylinder_axial_field(z: f64, a: f64, b: f64, r: f64) -> f64 {
    let (ua, ub) = (z - a, z - b);
    let (sa, sb) = ((ua * ua + r * r).sqrt(), (ub * ub + r * r).sqrt());
    // sqrt(ub^2+R^2) - sqrt(ua^2+R^2) = (ub^2 - ua^2) / (sb + sa)
    (ua.abs() - ub.abs() + (ub * ub - ua * ua) / (sa + sb)) / (2.0 * EPSILON_0)
}

/// F(u) of the module documentation, written as
/// (u R^2/(sqrt(u^2+R^2)+|u|) + R^2 asinh(u/R)) / 2 to avoid cancellation.
fn potential_primitive(u: f64, r: f64) -> f64 {
    let s = (u * u + r * r).sqrt();
    0.5 * (u * r * r / (s + u.abs()) + r * r * (u / r).asinh())
}

/// On-axis potential (V) at height `z` of a cylinder between `a` and `b` (m)
/// of radius `r` (m) holding unit charge density, zero at infinity.
pub fn cylinder_axial_potential(z: f64, a: f64, b: f64, r: f64) -> f64 {
    (potential_primitive(z - a, r) - potential_primitive(z - b, r)) / (2.0 * EPSILON_0)
}

/// Precomputed finite-column solver.
#[derive(Debug, Clone)]
pub struct ColumnSolver {
    /// Column radius (m).
    pub radius: f64,
    /// Number of cells.
    n: usize,
    /// On-axis potential (V) at a centre d cells above a cell of unit charge
    /// density, index d + n - 1 (d = -(n-1)..=n-1).
    potential_direct: Array1<f64>,
    /// Potential of the image of cell j at centre i, index i + j (0..=2n-2).
    potential_image: Array1<f64>,
    /// On-axis E_z (V m-1) at face i from unit charge in cell j, index
    /// i - j + n - 1 (i - j = -(n-1)..=n).
    field_direct: Array1<f64>,
    /// E_z of the image of cell j at face i, index i + j (0..=2n-1).
    field_image: Array1<f64>,
    /// The FFT route, for columns of [`FFT_FROM`] cells or more.
    spectral: Option<Box<Spectral>>,
}

impl ColumnSolver {
    pub fn new(grid: &Grid, radius: f64) -> Self {
        let n = grid.len();
        let dz = grid.dz;
        let off = n as f64 - 1.0;
        // Centre i = (i + 1/2) dz, cell j = [j dz, (j + 1) dz], its image
        // [-(j + 1) dz, -j dz]; face i = i dz. Shifting target and source
        // together leaves the on-axis response unchanged.
        let potential_direct = Array1::from_shape_fn(2 * n - 1, |k| {
            cylinder_axial_potential((k as f64 - off + 0.5) * dz, 0.0, dz, radius)
        });
        let potential_image = Array1::from_shape_fn(2 * n - 1, |s| {
            cylinder_axial_potential((s as f64 + 0.5) * dz, -dz, 0.0, radius)
        });
        let field_direct = Array1::from_shape_fn(2 * n, |k| {
            cylinder_axial_field((k as f64 - off) * dz, 0.0, dz, radius)
        });
        let field_image = Array1::from_shape_fn(2 * n, |s| {
            cylinder_axial_field(s as f64 * dz, -dz, 0.0, radius)
        });
        let spectral = (n >= FFT_FROM).then(|| {
            let s = |a: &Array1<f64>| a.to_vec();
            Box::new(Spectral::new(
                &s(&potential_direct),
                &s(&potential_image),
                &s(&field_direct),
                &s(&field_image),
                n,
            ))
        });
        ColumnSolver {
            radius,
            n,
            potential_direct,
            potential_image,
            field_direct,
            field_image,
            spectral,
        }
    }

    /// The same solver without the FFT route (the direct sums at any size),
    /// for comparisons.
    pub fn direct_only(mut self) -> Self {
        self.spectral = None;
        self
    }

    /// Potential at centres and field on faces (on the axis) from `rho` (C m-3):
    /// the superposition of the responses of the charged cells and their images.
    pub fn solve(&self, rho: &[f64], phi: &mut [f64], e: &mut [f64]) {
        if let Some(s) = &self.spectral {
            s.solve(rho, phi, e);
            return;
        }
        self.direct(rho, Some(phi), e, false);
    }

    /// The field of [`ColumnSolver::solve`] alone, with the same bits; `phi`
    /// is left as it was where the direct sums are used (half their work),
    /// and solved as well on the FFT route, whose one inverse transform
    /// gives both.
    pub fn solve_field(&self, rho: &[f64], phi: &mut [f64], e: &mut [f64]) {
        if let Some(s) = &self.spectral {
            s.solve(rho, phi, e);
            return;
        }
        self.direct(rho, None, e, false);
    }

    /// The direct sums in the portable build, without the run-time choice
    /// of instruction set (for the test that both give the same bits).
    pub fn solve_portable(&self, rho: &[f64], phi: &mut [f64], e: &mut [f64]) {
        self.direct(rho, Some(phi), e, true);
    }

    fn direct(&self, rho: &[f64], phi: Option<&mut [f64]>, e: &mut [f64], portable: bool) {
        let n = self.n;
        let slices = (
            self.potential_direct.as_slice(),
            self.potential_image.as_slice(),
            self.field_direct.as_slice(),
            self.field_image.as_slice(),
        );
        let (Some(pd), Some(pi), Some(fd), Some(fi)) = slices else {
            unreachable!("owned one-dimensional arrays are contiguous")
        };
        let responses = Responses { pd, pi, fd, fi };
        if portable {
            direct_sums(n, rho, &responses, phi, e);
            return;
        }
        #[cfg(target_arch = "x86_64")]
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor has just been found to support AVX2,
            // the only requirement of `direct_sums_avx2`.
            unsafe { direct_sums_avx2(n, rho, &responses, phi, e) };
            return;
        }
        direct_sums(n, rho, &responses, phi, e);
    }
}

/// The four response vectors of the direct sums.
struct Responses<'a> {
    pd: &'a [f64],
    pi: &'a [f64],
    fd: &'a [f64],
    fi: &'a [f64],
}

/// The direct sums phi_i = sum_j rho_j (pd - pi), E likewise, over the
/// charged cells (E alone when `phi` is `None`, each E with the same
/// operations). Plain arithmetic (no fused multiply-add), so every
/// instruction set gives the same bits. Sources are taken four at a time,
/// each target summing them in the order of j as one at a time would (so
/// the bits are those of the one-at-a-time sums), with a quarter of the
/// loads and stores of the targets; a block without charge is skipped (an
/// uncharged cell adds exactly zero).
#[inline(always)]
fn direct_sums(
    n: usize,
    rho: &[f64],
    r: &Responses<'_>,
    mut phi: Option<&mut [f64]>,
    e: &mut [f64],
) {
    if let Some(phi) = phi.as_deref_mut() {
        phi.fill(0.0);
    }
    e.fill(0.0);
    let mut j = 0;
    while j < n {
        let block = &rho[j..(j + 4).min(n)];
        if block.iter().all(|&q| q == 0.0) {
            j += block.len();
            continue;
        }
        if let [q0, q1, q2, q3] = *block {
            let charge = [q0, q1, q2, q3];
            // Source j + m starts the direct response at n - 1 - j - m and
            // the image response at j + m.
            let start = n - 4 - j;
            if let Some(phi) = phi.as_deref_mut() {
                add_differences(
                    phi,
                    &r.pd[start..start + n + 3],
                    &r.pi[j..j + n + 3],
                    charge,
                );
            }
            add_differences(e, &r.fd[start..start + n + 4], &r.fi[j..j + n + 4], charge);
            j += 4;
        } else {
            for (m, &q) in block.iter().enumerate() {
                if q != 0.0 {
                    let start = n - 1 - (j + m);
                    if let Some(phi) = phi.as_deref_mut() {
                        add_difference(phi, &r.pd[start..start + n], &r.pi[j + m..j + m + n], q);
                    }
                    add_difference(
                        e,
                        &r.fd[start..start + n + 1],
                        &r.fi[j + m..j + m + n + 1],
                        q,
                    );
                }
            }
            j += block.len();
        }
    }
}

/// out[k] += s_m (direct[k + 3 - m] - image[k + m]) for m = 0..4 in that
/// order: four sources (cells j..j+4) against one pass over the targets.
/// `direct` and `image` hold out.len() + 3 values.
#[inline(always)]
fn add_differences(out: &mut [f64], direct: &[f64], image: &[f64], s: [f64; 4]) {
    let len = out.len();
    let (d, i) = (&direct[..len + 3], &image[..len + 3]);
    let d0 = &d[3..len + 3];
    let d1 = &d[2..len + 2];
    let d2 = &d[1..len + 1];
    let d3 = &d[..len];
    let i0 = &i[..len];
    let i1 = &i[1..len + 1];
    let i2 = &i[2..len + 2];
    let i3 = &i[3..len + 3];
    for k in 0..len {
        let mut o = out[k];
        o += s[0] * (d0[k] - i0[k]);
        o += s[1] * (d1[k] - i1[k]);
        o += s[2] * (d2[k] - i2[k]);
        o += s[3] * (d3[k] - i3[k]);
        out[k] = o;
    }
}

/// [`direct_sums`] compiled for AVX2 (four lanes instead of SSE2's two),
/// chosen at run time so one binary serves every x86-64 machine. Without
/// FMA the results are bit-identical to the portable build (tested).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn direct_sums_avx2(
    n: usize,
    rho: &[f64],
    r: &Responses<'_>,
    phi: Option<&mut [f64]>,
    e: &mut [f64],
) {
    direct_sums(n, rho, r, phi, e)
}

/// out += s (direct - image), element-wise (vectorises).
#[inline(always)]
fn add_difference(out: &mut [f64], direct: &[f64], image: &[f64], s: f64) {
    for ((o, d), i) in out.iter_mut().zip(direct).zip(image) {
        *o += s * (d - i);
    }
}
