//! Parsing colours: `#rrggbb` or a CSS colour name.

use palette::Srgb;

use crate::diag::did_you_mean;

/// What the show file may write for a colour, for error messages.
const ACCEPTED: &str = "a colour is #rrggbb (six hexadecimal digits) or a CSS colour name";

/// Why a colour string was refused.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum ColourError {
    /// The string was empty (or only white space).
    #[error("empty colour: {ACCEPTED}")]
    Empty,
    /// The string starts with `#` but is not `#` and six hexadecimal digits.
    #[error("colour {value:?} is not #rrggbb: {ACCEPTED}{}", hint(suggestion))]
    BadHex {
        /// The text as written.
        value: String,
        /// A corrected form, when one is obvious (`#fff` -> `#ffffff`).
        suggestion: Option<String>,
    },
    /// The string is not a CSS colour name.
    #[error("unknown colour {value:?}: {ACCEPTED}{}", hint(suggestion))]
    UnknownName {
        /// The text as written.
        value: String,
        /// The nearest CSS colour name by edit distance, or `#rrggbb` when the
        /// text is six hexadecimal digits without the `#`.
        suggestion: Option<String>,
    },
}

impl ColourError {
    /// The suggested replacement, if any (a CSS name or a `#rrggbb` string).
    pub fn suggestion(&self) -> Option<&str> {
        match self {
            ColourError::Empty => None,
            ColourError::BadHex { suggestion, .. }
            | ColourError::UnknownName { suggestion, .. } => suggestion.as_deref(),
        }
    }

    /// The text that was refused (empty for [`ColourError::Empty`]).
    pub fn value(&self) -> &str {
        match self {
            ColourError::Empty => "",
            ColourError::BadHex { value, .. } | ColourError::UnknownName { value, .. } => value,
        }
    }
}

/// `"; did you mean \"x\"?"` for a suggestion, or nothing.
fn hint(suggestion: &Option<String>) -> String {
    suggestion
        .as_ref()
        .map_or_else(String::new, |s| format!("; did you mean {s:?}?"))
}

/// Every CSS colour name palette knows (W3C CSS Color Module), sorted.
pub fn css_names() -> Vec<&'static str> {
    let mut names: Vec<&'static str> = palette::named::names().collect();
    names.sort_unstable();
    names
}

/// Parses `#rrggbb` (either case) or a CSS colour name (any case) into 8-bit sRGB.
pub fn parse_colour(s: &str) -> Result<Srgb<u8>, ColourError> {
    if s.trim().is_empty() {
        return Err(ColourError::Empty);
    }
    if let Some(digits) = s.strip_prefix('#') {
        return parse_hex(digits).ok_or_else(|| ColourError::BadHex {
            value: s.to_owned(),
            suggestion: short_hex_expanded(digits),
        });
    }
    let lower = s.to_ascii_lowercase();
    if let Some(c) = palette::named::from_str(&lower) {
        return Ok(c);
    }
    let suggestion = if parse_hex(s).is_some() {
        Some(format!("#{lower}"))
    } else {
        let names = css_names();
        did_you_mean(&lower, names.iter().copied()).map(str::to_owned)
    };
    Err(ColourError::UnknownName {
        value: s.to_owned(),
        suggestion,
    })
}

/// Six hexadecimal digits to a colour.
fn parse_hex(digits: &str) -> Option<Srgb<u8>> {
    if digits.len() != 6 || !digits.bytes().all(|b| b.is_ascii_hexdigit()) {
        return None;
    }
    // All six bytes are ASCII, so these slices fall on character boundaries.
    let byte = |i: usize| u8::from_str_radix(&digits[i..i + 2], 16).ok();
    Some(Srgb::new(byte(0)?, byte(2)?, byte(4)?))
}

/// `fff` -> `#ffffff`: the CSS three-digit form, which a show file must spell out.
fn short_hex_expanded(digits: &str) -> Option<String> {
    if digits.len() != 3 || !digits.bytes().all(|b| b.is_ascii_hexdigit()) {
        return None;
    }
    let mut out = String::from("#");
    for c in digits.chars() {
        let c = c.to_ascii_lowercase();
        out.push(c);
        out.push(c);
    }
    Some(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rgb(r: u8, g: u8, b: u8) -> Srgb<u8> {
        Srgb::new(r, g, b)
    }

    #[test]
    fn hex_in_either_case() {
        assert_eq!(parse_colour("#ff2000"), Ok(rgb(0xff, 0x20, 0x00)));
        assert_eq!(parse_colour("#0050FF"), Ok(rgb(0x00, 0x50, 0xff)));
        assert_eq!(parse_colour("#AbCdEf"), Ok(rgb(0xab, 0xcd, 0xef)));
        assert_eq!(parse_colour("#000000"), Ok(rgb(0, 0, 0)));
        assert_eq!(parse_colour("#ffffff"), Ok(rgb(255, 255, 255)));
    }

    #[test]
    fn css_names_follow_the_css_color_module() {
        // Values from W3C CSS Color Module Level 4, section 6.1 (named colours).
        assert_eq!(parse_colour("rebeccapurple"), Ok(rgb(0x66, 0x33, 0x99)));
        assert_eq!(parse_colour("red"), Ok(rgb(255, 0, 0)));
        assert_eq!(parse_colour("lime"), Ok(rgb(0, 255, 0)));
        assert_eq!(parse_colour("green"), Ok(rgb(0, 128, 0)));
        assert_eq!(parse_colour("orange"), Ok(rgb(0xff, 0xa5, 0x00)));
        assert_eq!(parse_colour("gray"), parse_colour("grey"));
        assert_eq!(parse_colour("gray"), Ok(rgb(128, 128, 128)));
        // CSS Color Module Level 4 lists 148 named colours (with rebeccapurple),
        // not counting `transparent` and `currentcolor`.
        assert_eq!(css_names().len(), 148);
    }

    #[test]
    fn names_are_case_insensitive() {
        // CSS keywords are ASCII case-insensitive (CSS Syntax Module Level 3).
        assert_eq!(parse_colour("RebeccaPurple"), Ok(rgb(0x66, 0x33, 0x99)));
        assert_eq!(parse_colour("NAVY"), Ok(rgb(0, 0, 128)));
    }

    #[test]
    fn bad_hex_names_the_value_and_the_forms() {
        for bad in ["#12345", "#1234567", "#gg0000", "#", "#ff 000"] {
            let e = parse_colour(bad).unwrap_err();
            let msg = e.to_string();
            assert!(matches!(e, ColourError::BadHex { .. }), "{bad}");
            assert!(msg.contains(&format!("{bad:?}")), "{msg}");
            assert!(msg.contains("#rrggbb"), "{msg}");
            assert!(msg.contains("CSS colour name"), "{msg}");
            assert!(msg.starts_with(char::is_lowercase), "{msg}");
        }
    }

    #[test]
    fn short_hex_suggests_the_long_form() {
        let e = parse_colour("#F80").unwrap_err();
        assert_eq!(e.suggestion(), Some("#ff8800"));
        assert!(e.to_string().ends_with("did you mean \"#ff8800\"?"), "{e}");
    }

    #[test]
    fn hex_without_hash_suggests_the_hash() {
        let e = parse_colour("FF2000").unwrap_err();
        assert_eq!(e.suggestion(), Some("#ff2000"));
    }

    #[test]
    fn unknown_names_get_the_nearest_css_name() {
        let e = parse_colour("rebbecapurple").unwrap_err();
        assert_eq!(e.suggestion(), Some("rebeccapurple"));
        assert_eq!(
            e.to_string(),
            "unknown colour \"rebbecapurple\": a colour is #rrggbb (six hexadecimal digits) \
             or a CSS colour name; did you mean \"rebeccapurple\"?"
        );
        assert_eq!(
            parse_colour("Yelow").unwrap_err().suggestion(),
            Some("yellow")
        );
        assert_eq!(
            parse_colour("dark blue").unwrap_err().suggestion(),
            Some("darkblue")
        );
        let far = parse_colour("sparkle").unwrap_err();
        assert_eq!(far.suggestion(), None);
        assert!(!far.to_string().contains("did you mean"));
    }

    #[test]
    fn empty_is_an_error_not_a_panic() {
        assert_eq!(parse_colour(""), Err(ColourError::Empty));
        assert_eq!(parse_colour("  "), Err(ColourError::Empty));
        assert!(parse_colour("#ééé").is_err());
        assert!(parse_colour("#ééé000").is_err());
        assert!(parse_colour("é").is_err());
    }
}

#[cfg(test)]
mod properties {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        #[test]
        fn any_text_parses_or_errs_without_panic(s in "\\PC{0,12}") {
            if let Err(e) = parse_colour(&s) {
                prop_assert!(!e.to_string().is_empty());
            }
        }

        #[test]
        fn hex_round_trips(rgb in any::<[u8; 3]>(), upper in any::<bool>()) {
            let [r, g, b] = rgb;
            let text = format!("#{r:02x}{g:02x}{b:02x}");
            let text = if upper { text.to_ascii_uppercase() } else { text };
            prop_assert_eq!(parse_colour(&text), Ok(Srgb::new(r, g, b)));
        }
    }
}
