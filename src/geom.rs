//! A small 3-vector and 3x3 matrix in stage coordinates.
//!
//! Stage coordinates are metres, right-handed: x to the audience's right, y
//! up, z toward the audience (`docs/conventions.md`, "Space"). A [`Vec3`] is
//! a position (m), a velocity (m/s), an acceleration (m/s^2), a force (N) or a
//! direction (unit length, no unit), as its name at the use site says.
//!
//! Every operation is plain IEEE-754 arithmetic in a fixed order (`sqrt` is
//! correctly rounded by IEEE-754, so it is the same on every machine), so
//! results are bit for bit the same everywhere. The order of the sums is the
//! one the code had before (a dot product is `x*x' + y*y' + z*z'`, left to
//! right; `normalize` divides each component by the norm), so outputs did not
//! change when this type came in.

use std::iter::Sum;
use std::ops::{Add, AddAssign, Div, DivAssign, Index, Mul, MulAssign, Neg, Sub, SubAssign};

/// A vector of three `f64` components, in stage axes (x right, y up, z toward
/// the audience). The unit is the caller's: metres for a position, m/s for a
/// velocity, and so on.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Vec3 {
    /// Component along the stage's x axis (to the audience's right).
    pub x: f64,
    /// Component along the stage's y axis (up).
    pub y: f64,
    /// Component along the stage's z axis (toward the audience).
    pub z: f64,
}

impl Vec3 {
    /// The vector `(x, y, z)`.
    #[inline]
    pub const fn new(x: f64, y: f64, z: f64) -> Self {
        Self { x, y, z }
    }

    /// The zero vector.
    #[inline]
    pub const fn zeros() -> Self {
        Self::new(0.0, 0.0, 0.0)
    }

    /// The vector with every component `v`.
    #[inline]
    pub const fn repeat(v: f64) -> Self {
        Self::new(v, v, v)
    }

    /// The unit vector along x (to the audience's right).
    #[inline]
    pub const fn x() -> Self {
        Self::new(1.0, 0.0, 0.0)
    }

    /// The unit vector along y (up).
    #[inline]
    pub const fn y() -> Self {
        Self::new(0.0, 1.0, 0.0)
    }

    /// The unit vector along z (toward the audience).
    #[inline]
    pub const fn z() -> Self {
        Self::new(0.0, 0.0, 1.0)
    }

    /// The components as an array `[x, y, z]`.
    #[inline]
    pub const fn to_array(self) -> [f64; 3] {
        [self.x, self.y, self.z]
    }

    /// Dot product `x*x' + y*y' + z*z'` (unit: the product of both units).
    #[inline]
    pub fn dot(&self, other: &Self) -> f64 {
        self.x * other.x + self.y * other.y + self.z * other.z
    }

    /// Cross product `self x other`, right-handed (x cross y is z).
    #[inline]
    pub fn cross(&self, other: &Self) -> Self {
        Self::new(
            self.y * other.z - self.z * other.y,
            self.z * other.x - self.x * other.z,
            self.x * other.y - self.y * other.x,
        )
    }

    /// Squared length (unit: the vector's unit squared).
    #[inline]
    pub fn norm_squared(&self) -> f64 {
        self.dot(self)
    }

    /// Euclidean length (the vector's unit).
    #[inline]
    pub fn norm(&self) -> f64 {
        self.norm_squared().sqrt()
    }

    /// The vector divided by its length: a direction. The zero vector gives
    /// NaN components, as a division by zero length does.
    #[inline]
    pub fn normalize(&self) -> Self {
        *self / self.norm()
    }

    /// The vector with `s` added to every component (used for boxes grown
    /// by a radius).
    #[inline]
    pub fn add_scalar(&self, s: f64) -> Self {
        Self::new(self.x + s, self.y + s, self.z + s)
    }

    /// Componentwise minimum (`f64::min`: a NaN component gives the other).
    #[inline]
    pub fn inf(&self, other: &Self) -> Self {
        Self::new(
            self.x.min(other.x),
            self.y.min(other.y),
            self.z.min(other.z),
        )
    }

    /// Componentwise maximum (`f64::max`: a NaN component gives the other).
    #[inline]
    pub fn sup(&self, other: &Self) -> Self {
        Self::new(
            self.x.max(other.x),
            self.y.max(other.y),
            self.z.max(other.z),
        )
    }

    /// The components in order x, y, z.
    #[inline]
    pub fn iter(&self) -> std::array::IntoIter<f64, 3> {
        self.to_array().into_iter()
    }
}

impl std::fmt::Display for Vec3 {
    /// `(x, y, z)`, each component as `f64` displays itself (precision
    /// options apply to each).
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let show = |v: f64, f: &mut std::fmt::Formatter<'_>| match f.precision() {
            Some(p) => write!(f, "{v:.p$}"),
            None => write!(f, "{v}"),
        };
        write!(f, "(")?;
        show(self.x, f)?;
        write!(f, ", ")?;
        show(self.y, f)?;
        write!(f, ", ")?;
        show(self.z, f)?;
        write!(f, ")")
    }
}

impl From<[f64; 3]> for Vec3 {
    #[inline]
    fn from(a: [f64; 3]) -> Self {
        Self::new(a[0], a[1], a[2])
    }
}

impl From<Vec3> for [f64; 3] {
    #[inline]
    fn from(v: Vec3) -> Self {
        v.to_array()
    }
}

impl Index<usize> for Vec3 {
    type Output = f64;

    /// Component 0 (x), 1 (y) or 2 (z); any other index panics, as an
    /// array's does.
    #[inline]
    fn index(&self, i: usize) -> &f64 {
        match i {
            0 => &self.x,
            1 => &self.y,
            2 => &self.z,
            _ => panic!("Vec3 index {i} out of range 0..3"),
        }
    }
}

impl Add for Vec3 {
    type Output = Self;
    #[inline]
    fn add(self, o: Self) -> Self {
        Self::new(self.x + o.x, self.y + o.y, self.z + o.z)
    }
}

impl Sub for Vec3 {
    type Output = Self;
    #[inline]
    fn sub(self, o: Self) -> Self {
        Self::new(self.x - o.x, self.y - o.y, self.z - o.z)
    }
}

/// `a + b` and `a - b` where either side is borrowed.
macro_rules! by_ref {
    ($tr:ident, $f:ident) => {
        impl $tr<&Vec3> for Vec3 {
            type Output = Vec3;
            #[inline]
            fn $f(self, o: &Vec3) -> Vec3 {
                $tr::$f(self, *o)
            }
        }
        impl $tr<Vec3> for &Vec3 {
            type Output = Vec3;
            #[inline]
            fn $f(self, o: Vec3) -> Vec3 {
                $tr::$f(*self, o)
            }
        }
        impl $tr<&Vec3> for &Vec3 {
            type Output = Vec3;
            #[inline]
            fn $f(self, o: &Vec3) -> Vec3 {
                $tr::$f(*self, *o)
            }
        }
    };
}
by_ref!(Add, add);
by_ref!(Sub, sub);

impl Neg for Vec3 {
    type Output = Self;
    #[inline]
    fn neg(self) -> Self {
        Self::new(-self.x, -self.y, -self.z)
    }
}

impl Mul<f64> for Vec3 {
    type Output = Self;
    #[inline]
    fn mul(self, s: f64) -> Self {
        Self::new(self.x * s, self.y * s, self.z * s)
    }
}

impl Mul<Vec3> for f64 {
    type Output = Vec3;
    #[inline]
    fn mul(self, v: Vec3) -> Vec3 {
        Vec3::new(self * v.x, self * v.y, self * v.z)
    }
}

impl Div<f64> for Vec3 {
    type Output = Self;
    #[inline]
    fn div(self, s: f64) -> Self {
        Self::new(self.x / s, self.y / s, self.z / s)
    }
}

impl AddAssign for Vec3 {
    #[inline]
    fn add_assign(&mut self, o: Self) {
        *self = *self + o;
    }
}

impl AddAssign<&Vec3> for Vec3 {
    #[inline]
    fn add_assign(&mut self, o: &Vec3) {
        *self = *self + *o;
    }
}

impl SubAssign for Vec3 {
    #[inline]
    fn sub_assign(&mut self, o: Self) {
        *self = *self - o;
    }
}

impl MulAssign<f64> for Vec3 {
    #[inline]
    fn mul_assign(&mut self, s: f64) {
        *self = *self * s;
    }
}

impl DivAssign<f64> for Vec3 {
    #[inline]
    fn div_assign(&mut self, s: f64) {
        *self = *self / s;
    }
}

impl Sum for Vec3 {
    /// Sum from the zero vector, in iteration order.
    fn sum<I: Iterator<Item = Self>>(iter: I) -> Self {
        iter.fold(Self::zeros(), Add::add)
    }
}

impl<'a> Sum<&'a Vec3> for Vec3 {
    fn sum<I: Iterator<Item = &'a Vec3>>(iter: I) -> Self {
        iter.fold(Self::zeros(), |a, b| a + *b)
    }
}

/// A 3x3 matrix of `f64`, stored by rows (`m[row][col]`).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Mat3 {
    /// The rows, top to bottom.
    pub m: [[f64; 3]; 3],
}

impl Mat3 {
    /// The matrix with these nine entries, row by row.
    #[allow(clippy::too_many_arguments)]
    #[inline]
    pub const fn new(
        m11: f64,
        m12: f64,
        m13: f64,
        m21: f64,
        m22: f64,
        m23: f64,
        m31: f64,
        m32: f64,
        m33: f64,
    ) -> Self {
        Self {
            m: [[m11, m12, m13], [m21, m22, m23], [m31, m32, m33]],
        }
    }

    /// The matrix with these three rows.
    #[inline]
    pub const fn from_rows(rows: &[Vec3; 3]) -> Self {
        Self {
            m: [rows[0].to_array(), rows[1].to_array(), rows[2].to_array()],
        }
    }

    /// The matrix with these three columns.
    #[inline]
    pub const fn from_columns(cols: &[Vec3; 3]) -> Self {
        Self::from_rows(cols).transpose()
    }

    /// The diagonal matrix with `d` on its diagonal.
    #[inline]
    pub const fn from_diagonal(d: &Vec3) -> Self {
        Self {
            m: [[d.x, 0.0, 0.0], [0.0, d.y, 0.0], [0.0, 0.0, d.z]],
        }
    }

    /// The transpose.
    #[inline]
    pub const fn transpose(&self) -> Self {
        let m = self.m;
        Self {
            m: [
                [m[0][0], m[1][0], m[2][0]],
                [m[0][1], m[1][1], m[2][1]],
                [m[0][2], m[1][2], m[2][2]],
            ],
        }
    }

    /// Row `i` as a vector.
    #[inline]
    pub const fn row(&self, i: usize) -> Vec3 {
        Vec3::new(self.m[i][0], self.m[i][1], self.m[i][2])
    }

    /// The determinant (expansion along the first row).
    pub fn determinant(&self) -> f64 {
        self.row(0).dot(&self.row(1).cross(&self.row(2)))
    }

    /// The inverse by the adjugate, or `None` when the determinant is zero
    /// or not finite.
    pub fn try_inverse(&self) -> Option<Self> {
        let (r0, r1, r2) = (self.row(0), self.row(1), self.row(2));
        let det = r0.dot(&r1.cross(&r2));
        if det == 0.0 || !det.is_finite() {
            return None;
        }
        // The columns of the inverse are the cross products of the rows,
        // divided by the determinant.
        Some(Self::from_columns(&[
            r1.cross(&r2) / det,
            r2.cross(&r0) / det,
            r0.cross(&r1) / det,
        ]))
    }
}

impl Mul for Mat3 {
    type Output = Self;
    fn mul(self, o: Self) -> Self {
        let t = o.transpose();
        let mut m = [[0.0; 3]; 3];
        for (i, row) in m.iter_mut().enumerate() {
            for (j, v) in row.iter_mut().enumerate() {
                *v = self.row(i).dot(&t.row(j));
            }
        }
        Self { m }
    }
}

impl Mul<Vec3> for Mat3 {
    type Output = Vec3;
    #[inline]
    fn mul(self, v: Vec3) -> Vec3 {
        Vec3::new(
            self.row(0).dot(&v),
            self.row(1).dot(&v),
            self.row(2).dot(&v),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // References: the definitions of the dot and cross products and the
    // inverse by the adjugate in any linear-algebra textbook (for example
    // Strang, "Introduction to Linear Algebra", chapters 1 and 5). Values
    // below are worked by hand.

    #[test]
    fn cross_is_right_handed() {
        assert_eq!(Vec3::x().cross(&Vec3::y()), Vec3::z());
        assert_eq!(Vec3::y().cross(&Vec3::z()), Vec3::x());
        assert_eq!(Vec3::z().cross(&Vec3::x()), Vec3::y());
        let a = Vec3::new(1.0, 2.0, 3.0);
        let b = Vec3::new(4.0, 5.0, 6.0);
        // (2*6 - 3*5, 3*4 - 1*6, 1*5 - 2*4)
        assert_eq!(a.cross(&b), Vec3::new(-3.0, 6.0, -3.0));
        assert_eq!(a.cross(&b).dot(&a), 0.0);
    }

    #[test]
    fn dot_norm_and_normalize() {
        let a = Vec3::new(1.0, 2.0, 3.0);
        assert_eq!(a.dot(&Vec3::new(4.0, -5.0, 6.0)), 4.0 - 10.0 + 18.0);
        // A 2-3-6 right triangle's bigger brother: 2^2 + 3^2 + 6^2 = 7^2.
        let b = Vec3::new(2.0, -3.0, 6.0);
        assert_eq!(b.norm_squared(), 49.0);
        assert_eq!(b.norm(), 7.0);
        assert_eq!(b.normalize(), Vec3::new(2.0 / 7.0, -3.0 / 7.0, 6.0 / 7.0));
        assert!(Vec3::zeros().normalize().x.is_nan());
    }

    #[test]
    #[allow(clippy::op_ref)] // the borrowed forms are what this checks
    fn operators_and_conversions() {
        let a = Vec3::new(1.0, 2.0, 3.0);
        let b = Vec3::repeat(0.5);
        assert_eq!(a + b, Vec3::new(1.5, 2.5, 3.5));
        assert_eq!(a - b, Vec3::new(0.5, 1.5, 2.5));
        assert_eq!(-a, Vec3::new(-1.0, -2.0, -3.0));
        assert_eq!(a * 2.0, 2.0 * a);
        assert_eq!(a / 2.0, Vec3::new(0.5, 1.0, 1.5));
        let mut c = a;
        c += b;
        c -= a;
        c *= 4.0;
        c /= 2.0;
        assert_eq!(c, Vec3::repeat(1.0));
        assert_eq!(Vec3::from([1.0, 2.0, 3.0]), a);
        assert_eq!(<[f64; 3]>::from(a), [1.0, 2.0, 3.0]);
        assert_eq!((a[0], a[1], a[2]), (1.0, 2.0, 3.0));
        assert_eq!(a.iter().sum::<f64>(), 6.0);
        assert_eq!([a, b, a].iter().sum::<Vec3>(), Vec3::new(2.5, 4.5, 6.5));
        assert_eq!(Vec3::default(), Vec3::zeros());
        assert_eq!(format!("{}", Vec3::new(1.0, -2.5, 0.0)), "(1, -2.5, 0)");
        assert_eq!(
            format!("{:.2}", Vec3::new(1.0, -2.5, 0.0)),
            "(1.00, -2.50, 0.00)"
        );
        assert_eq!(&a - &b, a - b);
        assert_eq!(&a + b, a + b);
        assert_eq!(a - &b, a - b);
        let mut d = a;
        d += &b;
        assert_eq!(d, a + b);
        assert_eq!(a.add_scalar(-1.0), Vec3::new(0.0, 1.0, 2.0));
        let e = Vec3::new(3.0, 0.0, 3.0);
        assert_eq!(a.inf(&e), Vec3::new(1.0, 0.0, 3.0));
        assert_eq!(a.sup(&e), Vec3::new(3.0, 2.0, 3.0));
    }

    #[test]
    #[should_panic(expected = "out of range")]
    fn index_past_z_panics() {
        let _ = Vec3::zeros()[3];
    }

    #[test]
    fn matrix_products_and_inverse() {
        let a = Mat3::from_rows(&[
            Vec3::new(2.0, 0.0, 1.0),
            Vec3::new(1.0, 3.0, 2.0),
            Vec3::new(1.0, 1.0, 1.0),
        ]);
        // det = 2 (3 - 2) - 0 + 1 (1 - 3) = 0: singular.
        assert_eq!(a.determinant(), 0.0);
        assert!(a.try_inverse().is_none());
        assert_eq!(
            Mat3::new(1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0).row(1),
            Vec3::new(4.0, 5.0, 6.0)
        );
        let b = Mat3::from_rows(&[
            Vec3::new(2.0, 0.0, 0.0),
            Vec3::new(0.0, 4.0, 0.0),
            Vec3::new(1.0, 0.0, 1.0),
        ]);
        let inv = b.try_inverse().unwrap();
        // Worked by hand: [[1/2, 0, 0], [0, 1/4, 0], [-1/2, 0, 1]].
        assert_eq!(inv.m, [[0.5, 0.0, 0.0], [0.0, 0.25, 0.0], [-0.5, 0.0, 1.0]]);
        let id = Mat3::from_diagonal(&Vec3::repeat(1.0));
        assert_eq!(b * inv, id);
        assert_eq!(inv * b, id);
        assert_eq!(b * Vec3::new(1.0, 1.0, 1.0), Vec3::new(2.0, 4.0, 2.0));
        assert_eq!(b.transpose().row(0), Vec3::new(2.0, 0.0, 1.0));
        let c = Mat3::from_columns(&[Vec3::x(), Vec3::z(), Vec3::y()]);
        assert_eq!(c * Vec3::new(1.0, 2.0, 3.0), Vec3::new(1.0, 3.0, 2.0));
    }
}
