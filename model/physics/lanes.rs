//! Numbers that hold one cell (`f64`) or several cells side by side
//! ([`Cells`]), so that the process rates are written once and evaluated
//! either for one cell or for a group of cells in one instruction stream.
//!
//! A rate function written over [`Lane`] uses masks and [`Lane::select`]
//! where scalar code would branch, and skips a block only when no cell of
//! the group needs it ([`Mask::any`]). Arithmetic is lane by lane and in
//! the order written, without fused multiply-adds, so every lane of a
//! [`Cells`] evaluation gives the same bits as the `f64` evaluation of the
//! same cell (IEEE 754 addition and multiplication are commutative, so the
//! operand order within one operation does not matter; the grouping does
//! and is kept). The transcendental functions are the exceptions: one cell
//! uses the platform's `f64` functions, a group uses [`exp_each`],
//! [`ln_each`] and [`cbrt_each`], which work on all lanes at once and stay
//! within one unit in the last place of the platform's results.

// Lane loops index every array by the lane number: the plain form the
// compiler turns into one vector instruction.
#![allow(clippy::needless_range_loop)]
// The coefficients of the elementary functions are written as published,
// with more digits than a double holds.
#![allow(clippy::excessive_precision)]

use std::ops::{Add, AddAssign, BitAnd, BitOr, Div, Mul, MulAssign, Neg, Not, Sub, SubAssign};

/// Defines `fn NAME(args) -> ret` that runs `WITH(args)`, an
/// `#[inline(always)]` function over [`Cells`], compiled a second time for
/// AVX2 and chosen at run time where the processor has it (one binary
/// serves every x86-64 machine). Neither build uses fused multiply-add, so
/// both give the same bits. Helpers that `WITH` calls must be functions,
/// not closures: closures do not take on a function's target features.
///
/// Written with a body instead of `=> WITH`, the body becomes that inner
/// function, so the signature is written once; the `=> WITH` form is for a
/// portable build that tests call by name.
macro_rules! with_avx2 {
    (@run $with:ident($($arg:ident: $ty:ty),*) $(-> $ret:ty)?) => {{
        #[cfg(target_arch = "x86_64")]
        {
            #[target_feature(enable = "avx2")]
            unsafe fn avx2($($arg: $ty),*) $(-> $ret)? {
                $with($($arg),*)
            }
            if std::arch::is_x86_feature_detected!("avx2") {
                // SAFETY: the processor has AVX2, the only requirement
                // of the function's target feature.
                return unsafe { avx2($($arg),*) };
            }
        }
        $with($($arg),*)
    }};
    ($(#[$attr:meta])* $vis:vis fn $name:ident($($arg:ident: $ty:ty),* $(,)?) $(-> $ret:ty)? => $with:ident) => {
        $(#[$attr])*
        $vis fn $name($($arg: $ty),*) $(-> $ret)? {
            $crate::physics::lanes::with_avx2!(@run $with($($arg: $ty),*) $(-> $ret)?)
        }
    };
    ($(#[$attr:meta])* $vis:vis fn $name:ident($($arg:ident: $ty:ty),* $(,)?) $(-> $ret:ty)? $body:block) => {
        $(#[$attr])*
        $vis fn $name($($arg: $ty),*) $(-> $ret)? {
            #[inline(always)]
            fn portable($($arg: $ty),*) $(-> $ret)? $body
            $crate::physics::lanes::with_avx2!(@run portable($($arg: $ty),*) $(-> $ret)?)
        }
    };
}
pub(crate) use with_avx2;

/// Cells evaluated together: eight, two AVX2 registers per quantity, whose
/// independent chains the processor overlaps (the demo ran 4-8 % faster
/// than with four; docs/performance.md). The bits do not depend on it.
pub const WIDTH: usize = 8;

/// A set of true/false decisions, one per lane.
pub trait Mask: Copy + BitAnd<Output = Self> + BitOr<Output = Self> + Not<Output = Self> {
    /// Whether any lane is true.
    fn any(self) -> bool;
    /// Whether every lane is true.
    fn all(self) -> bool;
}

impl Mask for bool {
    #[inline(always)]
    fn any(self) -> bool {
        self
    }
    #[inline(always)]
    fn all(self) -> bool {
        self
    }
}

/// One value per lane: `f64` for one cell, [`Cells`] for [`WIDTH`] cells.
pub trait Lane:
    Copy
    + Default
    + std::fmt::Debug
    + PartialEq
    + Add<Output = Self>
    + Sub<Output = Self>
    + Mul<Output = Self>
    + Div<Output = Self>
    + Neg<Output = Self>
    + Add<f64, Output = Self>
    + Sub<f64, Output = Self>
    + Mul<f64, Output = Self>
    + Div<f64, Output = Self>
    + AddAssign
    + SubAssign
    + MulAssign
{
    type Mask: Mask;
    fn splat(x: f64) -> Self;
    /// The value of lane `i`.
    fn lane(self, i: usize) -> f64;
    /// The lanes `f(0), f(1), ...`.
    fn from_lanes(f: impl Fn(usize) -> f64) -> Self;
    /// `f64::max` lane by lane (a NaN operand yields the other).
    fn max(self, o: Self) -> Self;
    /// `f64::min` lane by lane.
    fn min(self, o: Self) -> Self;
    fn abs(self) -> Self;
    fn sqrt(self) -> Self;
    fn exp(self) -> Self;
    fn ln(self) -> Self;
    fn cbrt(self) -> Self;
    fn powi(self, n: i32) -> Self;
    /// `f(a, b)` lane by lane, for functions with three results.
    fn map3(a: Self, f: impl Fn(f64) -> (f64, f64, f64)) -> (Self, Self, Self);
    fn lt(self, o: Self) -> Self::Mask;
    fn le(self, o: Self) -> Self::Mask;
    fn gt(self, o: Self) -> Self::Mask;
    fn ge(self, o: Self) -> Self::Mask;
    fn ne(self, o: Self) -> Self::Mask;
    /// `a` where `m` holds, else `b`.
    fn select(m: Self::Mask, a: Self, b: Self) -> Self;
}

impl Lane for f64 {
    type Mask = bool;
    #[inline(always)]
    fn splat(x: f64) -> Self {
        x
    }
    #[inline(always)]
    fn lane(self, _: usize) -> f64 {
        self
    }
    #[inline(always)]
    fn from_lanes(f: impl Fn(usize) -> f64) -> Self {
        f(0)
    }
    #[inline(always)]
    fn max(self, o: Self) -> Self {
        f64::max(self, o)
    }
    #[inline(always)]
    fn min(self, o: Self) -> Self {
        f64::min(self, o)
    }
    #[inline(always)]
    fn abs(self) -> Self {
        f64::abs(self)
    }
    #[inline(always)]
    fn sqrt(self) -> Self {
        f64::sqrt(self)
    }
    #[inline(always)]
    fn exp(self) -> Self {
        f64::exp(self)
    }
    #[inline(always)]
    fn ln(self) -> Self {
        f64::ln(self)
    }
    #[inline(always)]
    fn cbrt(self) -> Self {
        f64::cbrt(self)
    }
    #[inline(always)]
    fn powi(self, n: i32) -> Self {
        f64::powi(self, n)
    }
    #[inline(always)]
    fn map3(a: Self, f: impl Fn(f64) -> (f64, f64, f64)) -> (Self, Self, Self) {
        f(a)
    }
    #[inline(always)]
    fn lt(self, o: Self) -> bool {
        self < o
    }
    #[inline(always)]
    fn le(self, o: Self) -> bool {
        self <= o
    }
    #[inline(always)]
    fn gt(self, o: Self) -> bool {
        self > o
    }
    #[inline(always)]
    fn ge(self, o: Self) -> bool {
        self >= o
    }
    #[inline(always)]
    fn ne(self, o: Self) -> bool {
        self != o
    }
    #[inline(always)]
    fn select(m: bool, a: Self, b: Self) -> Self {
        if m {
            a
        } else {
            b
        }
    }
}

/// [`WIDTH`] cells' values of one quantity.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Cells(pub [f64; WIDTH]);

/// [`WIDTH`] decisions, all bits set for true (so that selection is a
/// bitwise blend).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CellsMask(pub [u64; WIDTH]);

impl Mask for CellsMask {
    #[inline(always)]
    fn any(self) -> bool {
        self.0.iter().fold(0, |a, &m| a | m) != 0
    }
    #[inline(always)]
    fn all(self) -> bool {
        self.0.iter().fold(u64::MAX, |a, &m| a & m) != 0
    }
}

impl CellsMask {
    /// The decision of lane `i`.
    #[inline(always)]
    pub fn get(self, i: usize) -> bool {
        self.0[i] != 0
    }
}

macro_rules! lanewise_mask {
    ($tr:ident, $f:ident, $op:tt) => {
        impl $tr for CellsMask {
            type Output = CellsMask;
            #[inline(always)]
            fn $f(self, o: CellsMask) -> CellsMask {
                let mut r = [0; WIDTH];
                for i in 0..WIDTH {
                    r[i] = self.0[i] $op o.0[i];
                }
                CellsMask(r)
            }
        }
    };
}
lanewise_mask!(BitAnd, bitand, &);
lanewise_mask!(BitOr, bitor, |);

impl Not for CellsMask {
    type Output = CellsMask;
    #[inline(always)]
    fn not(self) -> CellsMask {
        CellsMask(self.0.map(|m| !m))
    }
}

macro_rules! lanewise_op {
    ($tr:ident, $f:ident, $op:tt, $tra:ident, $fa:ident) => {
        impl $tr for Cells {
            type Output = Cells;
            #[inline(always)]
            fn $f(self, o: Cells) -> Cells {
                let mut r = [0.0; WIDTH];
                for i in 0..WIDTH {
                    r[i] = self.0[i] $op o.0[i];
                }
                Cells(r)
            }
        }
        impl $tr<f64> for Cells {
            type Output = Cells;
            #[inline(always)]
            fn $f(self, o: f64) -> Cells {
                let mut r = [0.0; WIDTH];
                for i in 0..WIDTH {
                    r[i] = self.0[i] $op o;
                }
                Cells(r)
            }
        }
        impl $tra for Cells {
            #[inline(always)]
            fn $fa(&mut self, o: Cells) {
                *self = *self $op o;
            }
        }
    };
}
lanewise_op!(Add, add, +, AddAssign, add_assign);
lanewise_op!(Sub, sub, -, SubAssign, sub_assign);
lanewise_op!(Mul, mul, *, MulAssign, mul_assign);

impl Div for Cells {
    type Output = Cells;
    #[inline(always)]
    fn div(self, o: Cells) -> Cells {
        let mut r = [0.0; WIDTH];
        for i in 0..WIDTH {
            r[i] = self.0[i] / o.0[i];
        }
        Cells(r)
    }
}

impl Div<f64> for Cells {
    type Output = Cells;
    #[inline(always)]
    fn div(self, o: f64) -> Cells {
        let mut r = [0.0; WIDTH];
        for i in 0..WIDTH {
            r[i] = self.0[i] / o;
        }
        Cells(r)
    }
}

impl Neg for Cells {
    type Output = Cells;
    #[inline(always)]
    fn neg(self) -> Cells {
        Cells(self.0.map(|x| -x))
    }
}

impl Cells {
    #[inline(always)]
    fn map(self, f: impl Fn(f64) -> f64) -> Cells {
        let mut r = [0.0; WIDTH];
        for i in 0..WIDTH {
            r[i] = f(self.0[i]);
        }
        Cells(r)
    }

    #[inline(always)]
    fn zip(self, o: Cells, f: impl Fn(f64, f64) -> f64) -> Cells {
        let mut r = [0.0; WIDTH];
        for i in 0..WIDTH {
            r[i] = f(self.0[i], o.0[i]);
        }
        Cells(r)
    }

    #[inline(always)]
    fn compare(self, o: Cells, f: impl Fn(f64, f64) -> bool) -> CellsMask {
        let mut r = [0; WIDTH];
        for i in 0..WIDTH {
            r[i] = if f(self.0[i], o.0[i]) { u64::MAX } else { 0 };
        }
        CellsMask(r)
    }
}

impl Lane for Cells {
    type Mask = CellsMask;
    #[inline(always)]
    fn splat(x: f64) -> Self {
        Cells([x; WIDTH])
    }
    #[inline(always)]
    fn lane(self, i: usize) -> f64 {
        self.0[i]
    }
    #[inline(always)]
    fn from_lanes(f: impl Fn(usize) -> f64) -> Self {
        // A plain loop: `array::from_fn` over eight lanes was not inlined.
        let mut r = [0.0; WIDTH];
        for (i, x) in r.iter_mut().enumerate() {
            *x = f(i);
        }
        Cells(r)
    }
    #[inline(always)]
    fn max(self, o: Self) -> Self {
        self.zip(o, f64::max)
    }
    #[inline(always)]
    fn min(self, o: Self) -> Self {
        self.zip(o, f64::min)
    }
    #[inline(always)]
    fn abs(self) -> Self {
        self.map(f64::abs)
    }
    #[inline(always)]
    fn sqrt(self) -> Self {
        self.map(f64::sqrt)
    }
    #[inline(always)]
    fn exp(self) -> Self {
        Cells(exp_each(self.0))
    }
    #[inline(always)]
    fn ln(self) -> Self {
        Cells(ln_each(self.0))
    }
    #[inline(always)]
    fn cbrt(self) -> Self {
        Cells(cbrt_each(self.0))
    }
    #[inline(always)]
    fn powi(self, n: i32) -> Self {
        self.map(|x| x.powi(n))
    }
    #[inline(always)]
    fn map3(a: Self, f: impl Fn(f64) -> (f64, f64, f64)) -> (Self, Self, Self) {
        let (mut x, mut y, mut z) = ([0.0; WIDTH], [0.0; WIDTH], [0.0; WIDTH]);
        for i in 0..WIDTH {
            (x[i], y[i], z[i]) = f(a.0[i]);
        }
        (Cells(x), Cells(y), Cells(z))
    }
    #[inline(always)]
    fn lt(self, o: Self) -> CellsMask {
        self.compare(o, |a, b| a < b)
    }
    #[inline(always)]
    fn le(self, o: Self) -> CellsMask {
        self.compare(o, |a, b| a <= b)
    }
    #[inline(always)]
    fn gt(self, o: Self) -> CellsMask {
        self.compare(o, |a, b| a > b)
    }
    #[inline(always)]
    fn ge(self, o: Self) -> CellsMask {
        self.compare(o, |a, b| a >= b)
    }
    #[inline(always)]
    fn ne(self, o: Self) -> CellsMask {
        self.compare(o, |a, b| a != b)
    }
    #[inline(always)]
    fn select(m: CellsMask, a: Self, b: Self) -> Self {
        let mut r = [0.0; WIDTH];
        for i in 0..WIDTH {
            r[i] = f64::from_bits((a.0[i].to_bits() & m.0[i]) | (b.0[i].to_bits() & !m.0[i]));
        }
        Cells(r)
    }
}

/// ln 2 split in two (the "ln2_hi, ln2_lo" pair of fdlibm's e_exp.c, Sun
/// Microsystems 1993): the upper part has 21 trailing zero bits, so n ln2_hi
/// is exact for |n| < 2^21.
const LN2_HI: f64 = 6.931_471_803_691_238_164_90e-1;
const LN2_LO: f64 = 1.908_214_929_270_587_700_02e-10;
/// 1.5 x 2^52: adding it rounds a double of magnitude below 2^51 to an
/// integer held in the low bits of the sum (round to nearest, even).
const ROUNDER: f64 = 6_755_399_441_055_744.0;
/// The Remez coefficients of fdlibm's e_exp.c for R(r^2) on |r| <= ln 2 / 2
/// (error below 2^-59 there; from memory, checked by the test
/// `elementary_functions_within_rounding`).
const P1: f64 = 1.666_666_666_666_660_190_37e-1;
const P2: f64 = -2.777_777_777_701_559_338_42e-3;
const P3: f64 = 6.613_756_321_437_934_361_17e-5;
const P4: f64 = -1.653_390_220_546_525_153_90e-6;
const P5: f64 = 4.138_136_797_057_238_460_39e-8;
/// The minimax coefficients of fdlibm's e_log.c (Lg1-Lg7 there) for
/// R(z) = (ln m - 2 s)/s, z = s^2, |s| < 0.1716 (error below 2^-58.45 there;
/// from memory, checked by the test `elementary_functions_within_rounding`).
const Z1: f64 = 6.666_666_666_666_735_130e-1;
const Z2: f64 = 3.999_999_999_940_941_908e-1;
const Z3: f64 = 2.857_142_874_366_239_149e-1;
const Z4: f64 = 2.222_219_843_214_978_396e-1;
const Z5: f64 = 1.818_357_216_161_805_012e-1;
const Z6: f64 = 1.531_383_769_920_937_332e-1;
const Z7: f64 = 1.479_819_860_511_658_591e-1;

/// Where the vector form of e^x holds: 2^n stays in the normal range
/// (false for NaN).
#[inline(always)]
fn exp_range(x: f64) -> bool {
    (-708.0..=709.0).contains(&x)
}

/// Where the vector forms of ln x and the cube root hold: positive,
/// normal and finite (false for NaN).
#[inline(always)]
fn positive_normal(x: f64) -> bool {
    (f64::MIN_POSITIVE..=f64::MAX).contains(&x)
}

/// `out` with the lanes of `x` where `holds` fails replaced by the
/// platform's `f` of them (behind one test, so that the common case stays
/// a straight vector path); each lane depends on its own input only.
#[inline(always)]
fn platform_outside<const W: usize>(
    x: [f64; W],
    mut out: [f64; W],
    holds: fn(f64) -> bool,
    f: fn(f64) -> f64,
) -> [f64; W] {
    if !x.iter().all(|&v| holds(v)) {
        for (o, &v) in out.iter_mut().zip(&x) {
            if !holds(v) {
                *o = f(v);
            }
        }
    }
    out
}

/// e^x lane by lane, branch-free so that the lanes run as one vector:
/// x = n ln 2 + r with n = round(x / ln 2) and |r| <= ln 2 / 2 (Cody &
/// Waite 1980, Software Manual for the Elementary Functions, ch. 6), e^r by
/// the rational form of fdlibm's e_exp.c (Sun Microsystems 1993), times 2^n
/// assembled in the exponent bits. Within about one unit in the last
/// place of `f64::exp` (test `elementary_functions_within_rounding`).
/// Lanes outside [-708, 709] (where 2^n would leave the normal range) or
/// NaN take `f64::exp`; each lane's result depends on its own input only.
#[inline(always)]
pub fn exp_each<const W: usize>(x: [f64; W]) -> [f64; W] {
    let mut out = [0.0; W];
    for i in 0..W {
        // Lanes outside are computed at 0 here and replaced at the end.
        let x = if exp_range(x[i]) { x[i] } else { 0.0 };
        let shifted = x * std::f64::consts::LOG2_E + ROUNDER;
        let n = shifted - ROUNDER;
        let (hi, lo) = (x - n * LN2_HI, n * LN2_LO);
        let r = hi - lo;
        // e^r = 1 + 2 r / (R(r^2) - r) with R a minimax rational form,
        // written as fdlibm's e_exp.c does (coefficients P1-P5 there).
        let t = r * r;
        let c = r - t * (P1 + t * (P2 + t * (P3 + t * (P4 + t * P5))));
        let p = 1.0 - ((lo - (r * c) / (2.0 - c)) - hi);
        // The integer n sits in the low bits of `shifted`; 2^n is n + 1023
        // in the exponent field.
        let k = shifted.to_bits().wrapping_sub(ROUNDER.to_bits());
        let scale = f64::from_bits(k.wrapping_add(1023) << 52);
        out[i] = p * scale;
    }
    platform_outside(x, out, exp_range, f64::exp)
}

/// ln x lane by lane, branch-free: x = m 2^e with m in [sqrt(1/2),
/// sqrt(2)), ln m = 2 atanh(s) with s = (m - 1)/(m + 1), |s| < 0.172
/// (the series of Abramowitz & Stegun 1964, Eq. 4.1.27, from memory, here
/// with fdlibm's minimax coefficients), plus e ln 2 in two parts (Cody &
/// Waite 1980, ch. 5). Within about one unit in the last place of `f64::ln` (test
/// `elementary_functions_within_rounding`). Lanes that are not positive,
/// normal and finite take `f64::ln`.
#[inline(always)]
pub fn ln_each<const W: usize>(x: [f64; W]) -> [f64; W] {
    const MANTISSA: u64 = (1 << 52) - 1;
    let mut out = [0.0; W];
    for i in 0..W {
        // Lanes outside are computed at 1 here and replaced at the end.
        let bits = if positive_normal(x[i]) { x[i] } else { 1.0 }.to_bits();
        let field = bits >> 52;
        let m = f64::from_bits((bits & MANTISSA) | 1.0f64.to_bits());
        // The exponent field as a double: 2^52 + field, less 2^52 + 1023.
        let e = f64::from_bits(ROUNDER.to_bits() - (1 << 51) + field)
            - (4_503_599_627_370_496.0 + 1023.0);
        let high = m > std::f64::consts::SQRT_2;
        let (m, e) = if high { (m * 0.5, e + 1.0) } else { (m, e) };
        // With f = m - 1 (exact), s = f/(2 + f) and z = s^2:
        // ln m = 2 s + s R(z), R = 2 z/3 + 2 z^2/5 + ... (here fdlibm's
        // minimax polynomial), and 2 s = f - f^2/2 (1 - s), written so that
        // the exact f leads and the rounded terms are small corrections (the
        // arrangement of fdlibm's e_log.c).
        let f = m - 1.0;
        let s = f / (2.0 + f);
        let z = s * s;
        let r = Z1 + z * (Z2 + z * (Z3 + z * (Z4 + z * (Z5 + z * (Z6 + z * Z7)))));
        let r = r * z;
        let hfsq = 0.5 * f * f;
        out[i] = e * LN2_HI - ((hfsq - (s * (hfsq + r) + e * LN2_LO)) - f);
    }
    platform_outside(x, out, positive_normal, f64::ln)
}

/// The cube root lane by lane: exp(ln x / 3) ([`exp_each`], [`ln_each`])
/// refined by one Newton step for y^3 = x (Newton's method, common
/// practice). Lanes that are not positive, normal and finite take
/// `f64::cbrt`.
#[inline(always)]
pub fn cbrt_each<const W: usize>(x: [f64; W]) -> [f64; W] {
    let mut third = ln_each(x);
    for v in &mut third {
        *v *= 1.0 / 3.0;
    }
    let y = exp_each(third);
    let mut out = [0.0; W];
    for i in 0..W {
        let y2 = y[i] * y[i];
        out[i] = y[i] - (y2 * y[i] - x[i]) / (3.0 * y2);
    }
    platform_outside(x, out, positive_normal, f64::cbrt)
}
