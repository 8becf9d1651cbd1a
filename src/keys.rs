//! Choices a profile names by a key (`"disk"`, `"cgs"`, `"rotation"`): one
//! table per enumeration drives reading, printing and the hints in errors,
//! so the three can never disagree.

/// An enumeration with a profile key for each value.
pub trait Keyed: Copy + PartialEq + 'static {
    /// Every value with its key.
    const KEYS: &'static [(Self, &'static str)];

    /// The key of this value.
    fn key(self) -> &'static str {
        Self::KEYS
            .iter()
            .find(|(v, _)| *v == self)
            .map_or("?", |(_, k)| *k)
    }

    /// The value for a key, if any.
    fn from_key(key: &str) -> Option<Self> {
        Self::KEYS.iter().find(|(_, k)| *k == key).map(|(v, _)| *v)
    }
}
