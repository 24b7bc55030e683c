//! Fallible allocation for the big arrays of layers and prepared
//! geometries.
//!
//! Rust aborts the whole process when an allocation fails, which in a
//! loaded extension takes the host (the sqlite3 shell, Python, R) down with
//! it. Arrays whose size follows the input (one entry per feature, per
//! vertex, per edge) are therefore reserved with `try_reserve`, and before
//! a structure that allocates inside a library (rstar's bulk load) is
//! built, [`probe`] asks the allocator for its estimated size once. A
//! refusal becomes [`GeomError::OutOfMemory`], which the SQL layer reports
//! as an ordinary error; the connection goes on.
//!
//! A probe reserves address space without touching it, then gives it back:
//! under a limit on address space (`ulimit -v`) or memory overcommit
//! accounting, it fails exactly when an allocation of that size would.

use crate::error::GeomError;

/// An empty vector with room for `n` elements, or the error saying how
/// many bytes were asked for.
pub fn vec_with_capacity<T>(n: usize) -> Result<Vec<T>, GeomError> {
    let mut v = Vec::new();
    reserve(&mut v, n)?;
    Ok(v)
}

/// Makes room for `more` further elements of `v` (exactly that many).
pub fn reserve<T>(v: &mut Vec<T>, more: usize) -> Result<(), GeomError> {
    v.try_reserve_exact(more)
        .map_err(|_| GeomError::OutOfMemory {
            bytes: more.saturating_mul(std::mem::size_of::<T>()),
        })
}

/// Makes room for at least one more element, growing the way `push`
/// would (amortised doubling), without aborting on failure.
pub fn reserve_one<T>(v: &mut Vec<T>) -> Result<(), GeomError> {
    v.try_reserve(1).map_err(|_| GeomError::OutOfMemory {
        bytes: v.len().max(1).saturating_mul(std::mem::size_of::<T>()),
    })
}

/// Checks that `bytes` more could be allocated now: reserves that much
/// address space, does not touch it, and frees it.
pub fn probe(bytes: usize) -> Result<(), GeomError> {
    let mut v: Vec<u8> = Vec::new();
    v.try_reserve_exact(bytes)
        .map_err(|_| GeomError::OutOfMemory { bytes })
}

/// Frees `garbage` on a background thread of the rayon pool: freeing
/// hundreds of thousands of features takes a noticeable part of a second,
/// which an interrupted or failed statement should not wait for.
pub fn discard<T: Send + 'static>(garbage: T) {
    rayon::spawn(move || drop(garbage));
}

/// A value that is freed by [`discard`] when dropped if it was made
/// `big`, and in place otherwise: for the big temporaries of a long
/// computation (hundreds of megabytes take tens of milliseconds to free),
/// which would otherwise delay its return, after an interrupt too. Small
/// values are not worth a job on the pool.
pub struct FreeLater<T: Send + 'static> {
    value: Option<T>,
    big: bool,
}

impl<T: Send + 'static> FreeLater<T> {
    /// Wraps `value`; `big` says whether to free it in the background.
    pub fn new(value: T, big: bool) -> FreeLater<T> {
        FreeLater {
            value: Some(value),
            big,
        }
    }
}

impl<T: Send + 'static> std::ops::Deref for FreeLater<T> {
    type Target = T;
    fn deref(&self) -> &T {
        self.value.as_ref().expect("a value until dropped")
    }
}

impl<T: Send + 'static> std::ops::DerefMut for FreeLater<T> {
    fn deref_mut(&mut self) -> &mut T {
        self.value.as_mut().expect("a value until dropped")
    }
}

impl<T: Send + 'static> Drop for FreeLater<T> {
    fn drop(&mut self) {
        if let Some(value) = self.value.take() {
            if self.big {
                discard(value);
            }
        }
    }
}

/// A byte count for people: "840 bytes", "12.3 MB", "1.52 GB" (decimal
/// units, SI).
pub fn describe_bytes(bytes: usize) -> String {
    let b = bytes as f64;
    if b < 1e3 {
        format!("{bytes} bytes")
    } else if b < 1e6 {
        format!("{:.1} kB", b / 1e3)
    } else if b < 1e9 {
        format!("{:.1} MB", b / 1e6)
    } else {
        format!("{:.2} GB", b / 1e9)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_impossible_size_is_an_error_not_an_abort() {
        // More than any address space (isize::MAX bytes is Rust's limit
        // for one allocation: std::alloc::Layout, from the documentation).
        let err = probe(usize::MAX / 2).unwrap_err();
        assert_eq!(
            err,
            GeomError::OutOfMemory {
                bytes: usize::MAX / 2
            }
        );
        assert!(vec_with_capacity::<[f64; 4]>(usize::MAX / 64).is_err());
        assert!(probe(1 << 20).is_ok());
        let mut v: Vec<u8> = vec_with_capacity(10).unwrap();
        assert!(v.capacity() >= 10);
        reserve_one(&mut v).unwrap();
    }

    #[test]
    fn sizes_read_in_decimal_units() {
        assert_eq!(describe_bytes(840), "840 bytes");
        assert_eq!(describe_bytes(12_345_678), "12.3 MB");
        assert_eq!(describe_bytes(1_520_000_000), "1.52 GB");
    }
}
