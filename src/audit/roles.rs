//! What a cell says it is: a mass or a force (weight, load, tension), read
//! from the conventions engineers name cells by and from the words of its
//! description.
//!
//! Hand-written rather than a general text classifier: the conventions are
//! few and fixed (`m`, `m_*`, `W`, `F_*`, `T_*`, "weight", "load", …), and
//! every rule must be explainable in a finding.

/// A mass or a force.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Role {
    /// `m`, `m_skid`, `m1`, "mass".
    Mass,
    /// `W`, `W_motor`, `F_pin`, `T_up`, "weight", "load", "tension".
    Force,
}

impl Role {
    /// "a mass" or "a weight or force".
    pub fn describe(self) -> &'static str {
        match self {
            Role::Mass => "a mass",
            Role::Force => "a weight or force",
        }
    }
}

/// Where a role was read from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Evidence {
    /// The name's leading letter (`m_`, `W_`, `F_`, `T_`).
    NamePrefix,
    /// A word in the name (`rope_tension`, `part_mass`).
    NameWord,
    /// A word in the description ("rated load").
    Description,
}

impl Evidence {
    /// "named", "described".
    pub fn verb(self) -> &'static str {
        match self {
            Evidence::NamePrefix | Evidence::NameWord => "named",
            Evidence::Description => "described",
        }
    }
}

const FORCE_WORDS: &[&str] = &[
    "weight", "weights", "load", "loads", "force", "forces", "tension", "pull", "thrust",
];
const MASS_WORDS: &[&str] = &["mass", "masses"];

/// The role a cell's name, else its description, gives it. The name's
/// leading letter wins over words; words of both kinds give no role.
pub(super) fn role_of(name: &str, description: Option<&str>) -> Option<(Role, Evidence)> {
    let mut segments = name.split('_');
    if let Some(role) = segments.next().and_then(prefix_role) {
        return Some((role, Evidence::NamePrefix));
    }
    if let Some(role) = role_of_words(name.split('_')) {
        return Some((role, Evidence::NameWord));
    }
    let words = description?.split(|c: char| !c.is_alphanumeric());
    role_of_words(words).map(|role| (role, Evidence::Description))
}

/// `m`, `m1` → mass; `W`, `F`, `T`, `W2` → force. Case matters: `M` is a
/// moment and `t` a time.
fn prefix_role(first: &str) -> Option<Role> {
    let mut chars = first.chars();
    let letter = chars.next()?;
    if !chars.all(|c| c.is_ascii_digit()) {
        return None;
    }
    match letter {
        'm' => Some(Role::Mass),
        'W' | 'F' | 'T' => Some(Role::Force),
        _ => None,
    }
}

fn role_of_words<'a>(words: impl Iterator<Item = &'a str>) -> Option<Role> {
    let (mut mass, mut force) = (false, false);
    for word in words {
        let is = |list: &[&str]| list.iter().any(|w| w.eq_ignore_ascii_case(word));
        mass |= is(MASS_WORDS);
        force |= is(FORCE_WORDS);
    }
    match (mass, force) {
        (true, false) => Some(Role::Mass),
        (false, true) => Some(Role::Force),
        _ => None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_follow_the_usual_conventions() {
        assert_eq!(role_of("m", None), Some((Role::Mass, Evidence::NamePrefix)));
        assert_eq!(
            role_of("m_skid", Some("weight block")).map(|r| r.0),
            Some(Role::Mass)
        );
        assert_eq!(role_of("m2", None).map(|r| r.0), Some(Role::Mass));
        assert_eq!(role_of("W_A", None).map(|r| r.0), Some(Role::Force));
        assert_eq!(role_of("T_up", None).map(|r| r.0), Some(Role::Force));
        assert_eq!(role_of("F12", None).map(|r| r.0), Some(Role::Force));
        assert_eq!(role_of("M_brake", None), None);
        assert_eq!(role_of("t_stop", None), None);
        assert_eq!(role_of("WLL", None), None);
        assert_eq!(role_of("mu", None), None);
    }

    #[test]
    fn words_in_names_and_descriptions() {
        assert_eq!(
            role_of("rope_tension", None),
            Some((Role::Force, Evidence::NameWord))
        );
        assert_eq!(
            role_of("WLL", Some("rated load of the rope")),
            Some((Role::Force, Evidence::Description))
        );
        assert_eq!(role_of("cap", Some("mass of the load")), None);
        assert_eq!(role_of("cap", Some("weighed on the floor scale")), None);
        assert_eq!(
            role_of("payload", Some("casting mass")),
            Some((Role::Mass, Evidence::Description))
        );
    }
}
