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
//! and is kept). The transcendental functions call the same `f64`
//! functions lane by lane.

// Lane loops index every array by the lane number: the plain form the
// compiler turns into one vector instruction.
#![allow(clippy::needless_range_loop)]

use std::ops::{Add, AddAssign, BitAnd, BitOr, Div, Mul, MulAssign, Neg, Not, Sub, SubAssign};

/// Cells evaluated together.
pub const WIDTH: usize = 4;

/// A set of true/false decisions, one per lane.
pub trait Mask: Copy + BitAnd<Output = Self> + BitOr<Output = Self> + Not<Output = Self> {
    /// Whether any lane is true.
    fn any(self) -> bool;
}

impl Mask for bool {
    #[inline(always)]
    fn any(self) -> bool {
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
    fn map2x3(a: Self, b: Self, f: impl Fn(f64, f64) -> (f64, f64, f64)) -> (Self, Self, Self);
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
    fn map2x3(a: Self, b: Self, f: impl Fn(f64, f64) -> (f64, f64, f64)) -> (Self, Self, Self) {
        f(a, b)
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
        self.map(f64::exp)
    }
    #[inline(always)]
    fn ln(self) -> Self {
        self.map(f64::ln)
    }
    #[inline(always)]
    fn cbrt(self) -> Self {
        self.map(f64::cbrt)
    }
    #[inline(always)]
    fn powi(self, n: i32) -> Self {
        self.map(|x| x.powi(n))
    }
    #[inline(always)]
    fn map2x3(a: Self, b: Self, f: impl Fn(f64, f64) -> (f64, f64, f64)) -> (Self, Self, Self) {
        let (mut x, mut y, mut z) = ([0.0; WIDTH], [0.0; WIDTH], [0.0; WIDTH]);
        for i in 0..WIDTH {
            (x[i], y[i], z[i]) = f(a.0[i], b.0[i]);
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

#[cfg(test)]
mod tests {
    use super::*;

    /// IEEE 754 arithmetic is exact per lane: a group gives the bits of the
    /// scalar evaluation (common practice; the premise of this module).
    #[test]
    fn lanes_give_the_scalar_bits() {
        let xs = [0.3, -1.7e-12, 4.2e5, 7.0];
        let ys = [1.1, 2.5e-3, -0.0, 3.0];
        let (a, b) = (Cells(xs), Cells(ys));
        let f = |x: f64, y: f64| ((x * y + 3.0) / (y - x)).max(x.abs().sqrt()) * 0.5;
        let g = |x: Cells, y: Cells| ((x * y + 3.0) / (y - x)).max(x.abs().sqrt()) * 0.5;
        let r = g(a, b);
        for i in 0..WIDTH {
            assert_eq!(r.0[i].to_bits(), f(xs[i], ys[i]).to_bits());
        }
        let m = a.lt(b);
        let s = Cells::select(m, a, b);
        for i in 0..WIDTH {
            assert_eq!(m.get(i), xs[i] < ys[i]);
            assert_eq!(s.0[i], if xs[i] < ys[i] { xs[i] } else { ys[i] });
        }
        assert!(m.any() && !(m & !m).any());
    }
}
