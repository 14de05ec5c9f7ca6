//! Which names and titles a geometry file may hold.
//!
//! Load and port names become column suffixes in `modes.csv` (`q_ext_<port>`,
//! `load_energy_fraction_<load>`), keys in the JSON documents, physical group names in an
//! exported MSH file and targets in `[mesh.groups]`. So a name is letters, digits and
//! `_ - . +` only (no spaces, commas, quotes or control characters: "a b" and "a,b" would
//! read as one column in many spreadsheet imports), it is not "air" or "wall" in any
//! letter case (the background region and the metal wall carry those names), and no load
//! shares its name with a port (a `[mesh.groups]` target must say which one it means).
//!
//! A title is free text printed on the terminal and in the documents: control
//! characters (a terminal escape sequence starts with one) and the Unicode direction
//! overrides, which reorder what the terminal shows, are refused.

/// Names the geometry reserves for the background region and the metal wall.
pub const RESERVED_NAMES: [&str; 2] = ["air", "wall"];

/// `Err(what is allowed)` when `name` is not a valid load or port name.
pub fn check_name(name: &str) -> Result<(), String> {
    if let Some(c) = name.chars().find(|&c| !name_char(c)) {
        return Err(format!(
            "{} is not allowed in a name; use letters, digits and _ - . + only (names \
             become CSV column suffixes and MSH group names)",
            describe_char(c)
        ));
    }
    if let Some(r) = RESERVED_NAMES.iter().find(|r| r.eq_ignore_ascii_case(name)) {
        return Err(format!(
            "\"{r}\" names the {} in the outputs and in [mesh.groups]; choose another name",
            if *r == "air" {
                "background region"
            } else {
                "metal wall"
            }
        ));
    }
    Ok(())
}

fn name_char(c: char) -> bool {
    c.is_alphanumeric() || matches!(c, '_' | '-' | '.' | '+')
}

/// `Err(what is allowed)` when the title holds a character a terminal would act on.
pub fn check_title(title: &str) -> Result<(), String> {
    match title.chars().find(|&c| unsafe_in_text(c)) {
        None => Ok(()),
        Some(c) => Err(format!(
            "{} is not allowed in the title (control characters and direction overrides \
             change what a terminal shows); use printable text",
            describe_char(c)
        )),
    }
}

/// Control characters (tab allowed) and the bidirectional overrides and isolates
/// (U+202A–U+202E, U+2066–U+2069; Unicode Standard Annex #9, from memory).
pub fn unsafe_in_text(c: char) -> bool {
    (c.is_control() && c != '\t') || matches!(c, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
}

/// A character for a message, visible even when it is blank or a control character.
pub fn describe_char(c: char) -> String {
    match c {
        ' ' => "a space".to_string(),
        c if c.is_control() || c.is_whitespace() || unsafe_in_text(c) => {
            format!("the character U+{:04X}", c as u32)
        }
        c => format!("'{c}'"),
    }
}

/// `text` with every character a terminal would act on written as `\u{XXXX}`, for
/// messages that quote file contents.
pub fn escaped(text: &str) -> String {
    text.chars()
        .map(|c| {
            if unsafe_in_text(c) {
                format!("\\u{{{:04x}}}", c as u32)
            } else {
                c.to_string()
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_and_titles() {
        assert!(check_name("water_2.5-cup+lid").is_ok());
        assert!(check_name("Schüssel").is_ok());
        for bad in ["a b", "a,b", "a\"b", "a\u{1b}[31m", "Air", "wall", ""] {
            if !bad.is_empty() {
                assert!(check_name(bad).is_err(), "{bad:?} accepted");
            }
        }
        assert!(check_title("Oven \u{2014} test\t1").is_ok());
        assert!(check_title("x\u{1b}[2J").is_err());
        assert!(check_title("x\u{202e}y").is_err());
        assert_eq!(escaped("a\u{1b}[0m"), "a\\u{001b}[0m");
    }
}
