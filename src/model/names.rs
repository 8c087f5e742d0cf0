//! What a prop's name becomes outside the show: the C identifier of its
//! table in the C header (the file names are the name itself).

/// The C identifier of a table's array for a caller-given name (`"left hand"` -> `"left_hand_table"`).
///
/// ASCII letters are lower-cased and digits kept; every other run of characters
/// becomes one `_`; `_` at either end is dropped (leading underscores are
/// reserved in C); an empty result becomes `glowscore`, one starting with a digit
/// gets `prop_` in front; `_table` is appended, so no C keyword can result.
/// Macros use the upper-case form (`LEFT_HAND_TABLE_SIZE`).
pub fn c_identifier(name: &str) -> String {
    let mut base = String::new();
    for ch in name.chars() {
        if ch.is_ascii_alphanumeric() {
            base.push(ch.to_ascii_lowercase());
        } else if !base.ends_with('_') {
            base.push('_');
        }
    }
    let base = base.trim_matches('_');
    let base = if base.is_empty() { "glowscore" } else { base };
    let prefix = if base.starts_with(|c: char| c.is_ascii_digit()) {
        "prop_"
    } else {
        ""
    };
    format!("{prefix}{base}_table")
}
