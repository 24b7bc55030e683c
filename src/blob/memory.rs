//! Fallible allocation for the codecs. Rust aborts the whole process when
//! an allocation fails; inside a host such as the sqlite3 shell under a
//! memory limit (`ulimit -v`) that would kill the analyst's session. So
//! every buffer whose size comes from the input (a count in a WKB header,
//! the length of a text, the size of a geometry to write) is reserved with
//! `try_reserve`, and a failure becomes [`GeomError::TooLarge`].
//!
//! The rule for the codecs (see DEVELOPERS.md, "Allocation"): a capacity
//! read from a header is first bounded by what the remaining bytes can
//! hold, then reserved here; buffers that grow while parsing or writing
//! grow through [`grow`] and [`reserve_text`], never through a plain
//! `push` past their capacity.

use crate::error::GeomError;

fn too_large<T>(what: &'static str, items: usize) -> GeomError {
    GeomError::TooLarge {
        what,
        bytes: items.saturating_mul(std::mem::size_of::<T>()),
    }
}

/// An empty vector with room for exactly `n` items, or
/// [`GeomError::TooLarge`].
pub fn vec_with_capacity<T>(n: usize, what: &'static str) -> Result<Vec<T>, GeomError> {
    let mut v = Vec::new();
    v.try_reserve_exact(n)
        .map_err(|_| too_large::<T>(what, n))?;
    Ok(v)
}

/// Makes room for one more item in `v`, doubling its capacity when full
/// (as `push` would), or [`GeomError::TooLarge`].
pub fn grow<T>(v: &mut Vec<T>, what: &'static str) -> Result<(), GeomError> {
    if v.len() == v.capacity() {
        let more = v.len().max(4);
        v.try_reserve(more)
            .map_err(|_| too_large::<T>(what, v.len().saturating_add(more)))?;
    }
    Ok(())
}

/// Makes room for `n` more bytes of text in `s`, at least doubling its
/// capacity when it must grow, or [`GeomError::TooLarge`].
pub fn reserve_text(s: &mut String, n: usize, what: &'static str) -> Result<(), GeomError> {
    if s.capacity() - s.len() < n {
        let more = n.max(s.len());
        s.try_reserve(more)
            .map_err(|_| too_large::<u8>(what, s.len().saturating_add(more)))?;
    }
    Ok(())
}

/// What a plain allocation does when it fails: aborts the process (for the
/// infallible writers the tests and tools use; SQL functions never call it).
pub fn abort(e: &GeomError) -> ! {
    let bytes = match e {
        GeomError::TooLarge { bytes, .. } => *bytes,
        _ => 1,
    };
    let layout = std::alloc::Layout::array::<u8>(bytes).unwrap_or(std::alloc::Layout::new::<u8>());
    std::alloc::handle_alloc_error(layout)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn impossible_sizes_are_errors_not_aborts() {
        // usize::MAX / 2 doubles: more than any address space holds, so
        // try_reserve fails (Rust's Vec refuses capacities over isize::MAX
        // bytes, std documentation of Vec::try_reserve).
        let err = vec_with_capacity::<f64>(usize::MAX / 2, "a test").unwrap_err();
        assert_eq!(
            err,
            GeomError::TooLarge {
                what: "a test",
                bytes: usize::MAX
            }
        );
        assert!(err
            .to_string()
            .starts_with("geometry too large for available memory: could not allocate"));
        let mut s = String::from("abc");
        assert!(reserve_text(&mut s, usize::MAX, "text").is_err());
        assert_eq!(s, "abc");
    }

    #[test]
    fn growth_doubles_like_push() {
        let mut v: Vec<u32> = Vec::new();
        for i in 0..100 {
            grow(&mut v, "a test").unwrap();
            let cap = v.capacity();
            v.push(i);
            assert_eq!(v.capacity(), cap, "push never reallocates after grow");
        }
        let mut s = String::new();
        for _ in 0..100 {
            reserve_text(&mut s, 10, "text").unwrap();
            let cap = s.capacity();
            s.push_str("0123456789");
            assert_eq!(s.capacity(), cap);
        }
    }
}
