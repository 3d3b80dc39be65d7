//! Charge-structure analysis of a profile: charge regions and the structure
//! class (normal tripole, inverted, dipole, other).
//!
//! A region is a run of contiguous cells whose total charge density has one
//! sign and a magnitude of at least `min_fraction` of the profile's largest
//! |rho|. Regions holding less than `min_fraction` of the largest region's
//! charge are dropped (they are edges and noise, not structure), and
//! neighbours of the same sign left adjacent by a dropped region are merged.
//! The rules are this project's own, stated in docs/charging.md; the class
//! names follow the usage of the trade (Williams 1989, JGR 94, for the
//! tripole; inverted structures e.g. Fuchs et al. 2018).

/// One charge region.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Region {
    /// +1 or -1.
    pub polarity: f64,
    /// Lower and upper edges (m).
    pub bottom: f64,
    pub top: f64,
    /// Charge-weighted mean height (m) and the temperature there (degC).
    pub height: f64,
    pub temperature: f64,
    /// Charge per unit area (C m-2), signed.
    pub charge: f64,
}

/// Structure classes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Structure {
    /// Main negative with positive above and a smaller positive below.
    NormalTripole,
    /// Main positive with negative above and a smaller negative below.
    InvertedTripole,
    /// Positive above negative only.
    NormalDipole,
    /// Negative above positive only.
    InvertedDipole,
    /// Anything else (including no charge).
    Other,
}

impl Structure {
    pub fn name(self) -> &'static str {
        match self {
            Structure::NormalTripole => "normal_tripole",
            Structure::InvertedTripole => "inverted_tripole",
            Structure::NormalDipole => "normal_dipole",
            Structure::InvertedDipole => "inverted_dipole",
            Structure::Other => "other",
        }
    }
}

/// Charge regions of a profile: `z` cell centres (m), `dz` (m), `rho` total
/// charge density (C m-3), `t` temperature (K).
pub fn regions(z: &[f64], dz: f64, rho: &[f64], t: &[f64], min_fraction: f64) -> Vec<Region> {
    let peak = rho.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
    if peak == 0.0 {
        return Vec::new();
    }
    let floor = min_fraction * peak;
    let mut raw: Vec<(usize, usize)> = Vec::new(); // cell ranges [a, b)
    let mut k = 0;
    while k < rho.len() {
        if rho[k].abs() < floor {
            k += 1;
            continue;
        }
        let s = rho[k].signum();
        let a = k;
        while k < rho.len() && rho[k].abs() >= floor && rho[k].signum() == s {
            k += 1;
        }
        raw.push((a, k));
    }
    let build = |a: usize, b: usize| {
        let q: f64 = rho[a..b].iter().sum::<f64>() * dz;
        let w: f64 = rho[a..b].iter().map(|x| x.abs()).sum();
        let h = (a..b).map(|i| z[i] * rho[i].abs()).sum::<f64>() / w;
        let tc = (a..b).map(|i| t[i] * rho[i].abs()).sum::<f64>() / w - crate::constants::T_MELT;
        Region {
            polarity: q.signum(),
            bottom: z[a] - 0.5 * dz,
            top: z[b - 1] + 0.5 * dz,
            height: h,
            temperature: tc,
            charge: q,
        }
    };
    let all: Vec<(usize, usize, f64)> = raw
        .iter()
        .map(|&(a, b)| (a, b, build(a, b).charge))
        .collect();
    let biggest = all.iter().fold(0.0_f64, |m, r| m.max(r.2.abs()));
    let mut kept: Vec<(usize, usize)> = Vec::new();
    for &(a, b, q) in &all {
        if q.abs() < min_fraction * biggest {
            continue;
        }
        if let Some(last) = kept.last_mut() {
            let same = rho[last.0].signum() == rho[a].signum();
            if same {
                last.1 = b;
                continue;
            }
        }
        kept.push((a, b));
    }
    kept.into_iter().map(|(a, b)| build(a, b)).collect()
}

/// Structure class of regions ordered bottom to top. With N the region of
/// largest negative charge and P the region of largest positive charge:
/// P above N is the normal family, a tripole when some positive region
/// below N holds less charge than N, a dipole otherwise; N above P is the
/// inverted family, a tripole when some negative region below P holds less
/// charge than P. Only one polarity: other.
pub fn classify(regions: &[Region]) -> Structure {
    let largest = |sign: f64| {
        regions
            .iter()
            .filter(|r| r.polarity == sign)
            .max_by(|a, b| a.charge.abs().total_cmp(&b.charge.abs()))
    };
    let (Some(n), Some(p)) = (largest(-1.0), largest(1.0)) else {
        return Structure::Other;
    };
    if p.height > n.height {
        let lower = regions
            .iter()
            .any(|r| r.polarity > 0.0 && r.top <= n.bottom && r.charge.abs() < n.charge.abs());
        if lower {
            Structure::NormalTripole
        } else {
            Structure::NormalDipole
        }
    } else {
        let lower = regions
            .iter()
            .any(|r| r.polarity < 0.0 && r.top <= p.bottom && r.charge.abs() < p.charge.abs());
        if lower {
            Structure::InvertedTripole
        } else {
            Structure::InvertedDipole
        }
    }
}

/// Total charge of one sign in the column (C m-2): half the integral of |rho|,
/// the "charge separation" of a profile.
pub fn separation(rho: &[f64], dz: f64) -> f64 {
    0.5 * rho.iter().map(|x| x.abs()).sum::<f64>() * dz
}
