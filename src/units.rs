//! Units of length, with their exact definitions.
//!
//! The international mile and foot are defined exactly in metres (NIST
//! Special Publication 811, 2008 edition, appendix B.8: 1 mi = 1609.344 m,
//! 1 ft = 0.3048 m); the kilometre is 1000 m by the SI prefix.

/// Metres in one international mile (NIST SP 811, B.8), exact.
///
/// ```
/// // Half a mile, the park threshold of the trade (common practice).
/// assert_eq!(0.5 * ambit::units::METRES_PER_MILE, 804.672);
/// ```
pub const METRES_PER_MILE: f64 = 1609.344;
/// Metres in one international foot (NIST SP 811, B.8), exact.
pub const METRES_PER_FOOT: f64 = 0.3048;
/// Metres in one kilometre (SI), exact.
pub const METRES_PER_KILOMETRE: f64 = 1000.0;

/// Metres in one international yard (NIST SP 811, B.8), exact.
pub const METRES_PER_YARD: f64 = 0.9144;
/// Metres in one international nautical mile (NIST SP 811, B.8), exact.
pub const METRES_PER_NAUTICAL_MILE: f64 = 1852.0;

/// The units a length written as text may carry, with their metres.
/// Names are matched without regard to case.
pub const LENGTH_UNITS: &[(&str, f64)] = &[
    ("m", 1.0),
    ("metre", 1.0),
    ("metres", 1.0),
    ("meter", 1.0),
    ("meters", 1.0),
    ("km", METRES_PER_KILOMETRE),
    ("kilometre", METRES_PER_KILOMETRE),
    ("kilometres", METRES_PER_KILOMETRE),
    ("kilometer", METRES_PER_KILOMETRE),
    ("kilometers", METRES_PER_KILOMETRE),
    ("mi", METRES_PER_MILE),
    ("mile", METRES_PER_MILE),
    ("miles", METRES_PER_MILE),
    ("ft", METRES_PER_FOOT),
    ("foot", METRES_PER_FOOT),
    ("feet", METRES_PER_FOOT),
    ("yd", METRES_PER_YARD),
    ("yard", METRES_PER_YARD),
    ("yards", METRES_PER_YARD),
    ("nmi", METRES_PER_NAUTICAL_MILE),
];

/// Why a length written as text could not be read.
#[derive(Clone, Debug, PartialEq)]
pub enum LengthTextError {
    /// A number with no unit after it (`'800'`).
    NoUnit { number: f64 },
    /// A unit ambit does not know (`'3 leagues'`).
    UnknownUnit { unit: String },
    /// No number in front (`'mi'`, `'half a mile'`), or one that is not
    /// finite.
    NoNumber,
}

impl std::fmt::Display for LengthTextError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LengthTextError::NoUnit { number } => write!(
                f,
                "has no unit: write '{number} m' (or mi, km, ft), or pass a number of metres; a column imported from CSV holds text, CAST(column AS REAL) makes it a number"
            ),
            LengthTextError::UnknownUnit { unit } => write!(
                f,
                "has the unknown unit '{unit}'; use m, km, mi, ft, yd or nmi"
            ),
            LengthTextError::NoNumber => write!(
                f,
                "must be a length such as '0.5 mi', '800 m', '3 km' or '2640 ft'"
            ),
        }
    }
}

/// Reads a length written as text, a number and a unit: `'0.5 mi'`,
/// `'800 m'`, `'3 km'`, `'2640 ft'`, with or without a space, in any case
/// (see [`LENGTH_UNITS`]). Returns metres, using the exact definitions of
/// NIST SP 811 (B.8). The number may be negative here; callers that need a
/// distance refuse that.
///
/// ```
/// use ambit::units::parse_length;
/// assert_eq!(parse_length("0.5 mi"), Ok(804.672));
/// assert_eq!(parse_length("2640ft"), Ok(804.672));
/// assert_eq!(parse_length(" 3 KM "), Ok(3000.0));
/// assert!(parse_length("800").is_err());
/// ```
pub fn parse_length(text: &str) -> Result<f64, LengthTextError> {
    let text = text.trim();
    // The unit starts at the first letter other than an exponent's 'e'
    // ('1e3 m'); no unit name starts with 'e'.
    let split = text
        .find(|c: char| c.is_alphabetic() && c != 'e' && c != 'E')
        .unwrap_or(text.len());
    // Take the longest prefix that parses as a number.
    let (mut number, mut rest) = (None, text);
    for end in (1..=split).rev() {
        if !text.is_char_boundary(end) {
            continue;
        }
        if let Ok(v) = text[..end].trim().parse::<f64>() {
            number = Some(v);
            rest = &text[end..];
            break;
        }
    }
    let number = match number {
        Some(v) if v.is_finite() => v,
        _ => return Err(LengthTextError::NoNumber),
    };
    let unit = rest.trim();
    if unit.is_empty() {
        return Err(LengthTextError::NoUnit { number });
    }
    LENGTH_UNITS
        .iter()
        .find(|(name, _)| name.eq_ignore_ascii_case(unit))
        .map(|&(_, factor)| number * factor)
        .ok_or_else(|| LengthTextError::UnknownUnit {
            unit: unit.to_string(),
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_trade_thresholds_in_every_unit_agree() {
        // Half a mile, one mile, three miles (common practice, no source)
        // written four ways each; NIST SP 811 B.8 makes them equal exactly.
        for miles in [0.5, 1.0, 3.0] {
            let m = miles * METRES_PER_MILE;
            assert_eq!(parse_length(&format!("{miles} mi")), Ok(m));
            assert_eq!(parse_length(&format!("{miles} Miles")), Ok(m));
            assert_eq!(parse_length(&format!("{} ft", miles * 5280.0)), Ok(m));
            assert_eq!(parse_length(&format!("{} yd", miles * 1760.0)), Ok(m));
            assert_eq!(parse_length(&format!("{m}m")), Ok(m));
        }
        assert_eq!(parse_length("3 km"), Ok(3000.0));
        assert_eq!(parse_length("1e3 m"), Ok(1000.0));
        assert_eq!(parse_length("1 nmi"), Ok(1852.0));
        assert_eq!(parse_length("-1 m"), Ok(-1.0));
    }

    #[test]
    fn unreadable_lengths_say_why() {
        assert_eq!(
            parse_length("800"),
            Err(LengthTextError::NoUnit { number: 800.0 })
        );
        assert_eq!(
            parse_length("3 leagues"),
            Err(LengthTextError::UnknownUnit {
                unit: "leagues".into()
            })
        );
        assert_eq!(parse_length("mi"), Err(LengthTextError::NoNumber));
        assert_eq!(parse_length("half a mile"), Err(LengthTextError::NoNumber));
        assert_eq!(parse_length("inf m"), Err(LengthTextError::NoNumber));
        assert_eq!(parse_length("NaN m"), Err(LengthTextError::NoNumber));
        assert_eq!(parse_length(""), Err(LengthTextError::NoNumber));
    }
}
