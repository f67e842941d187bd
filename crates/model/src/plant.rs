//! Plant vocabulary: lubrication of a bearing position and the ISO 20816-3 machine classes.

use serde::{Deserialize, Serialize};

/// How a bearing position is lubricated. Oil-fed bearings usually outlast grease-fed ones in the later
/// stages (common practice, no source), so the forecast uses it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Lubrication {
    /// Grease-lubricated.
    Grease,
    /// Oil-fed (bath or circulating).
    Oil,
}

impl Lubrication {
    /// The word used in the plant file and the database: "grease" or "oil".
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Grease => "grease",
            Self::Oil => "oil",
        }
    }

    /// Parses [`Lubrication::as_str`].
    pub fn parse(word: &str) -> Option<Self> {
        match word {
            "grease" => Some(Self::Grease),
            "oil" => Some(Self::Oil),
            _ => None,
        }
    }
}

impl std::fmt::Display for Lubrication {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// ISO 20816-3 machine group.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum MachineGroup {
    /// Group 1: large machines (above 300 kW).
    Large,
    /// Group 2: medium machines (15 kW to 300 kW).
    Medium,
}

impl MachineGroup {
    /// Group from its number in the standard (1 or 2).
    pub fn from_number(n: u8) -> Option<Self> {
        match n {
            1 => Some(Self::Large),
            2 => Some(Self::Medium),
            _ => None,
        }
    }

    /// The group's number in the standard (1 or 2), as written in the plant file.
    pub fn number(self) -> u8 {
        match self {
            Self::Large => 1,
            Self::Medium => 2,
        }
    }
}

/// ISO 20816-3 support class in the measurement direction.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Support {
    /// Lowest natural frequency at least 25 % above the running speed.
    Rigid,
    /// Otherwise.
    Flexible,
}

impl Support {
    /// The word used in the plant file and the database: "rigid" or "flexible".
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Rigid => "rigid",
            Self::Flexible => "flexible",
        }
    }

    /// Parses [`Support::as_str`].
    pub fn parse(word: &str) -> Option<Self> {
        match word {
            "rigid" => Some(Self::Rigid),
            "flexible" => Some(Self::Flexible),
            _ => None,
        }
    }
}

impl std::fmt::Display for Support {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn words_and_numbers_round_trip() {
        for l in [Lubrication::Grease, Lubrication::Oil] {
            assert_eq!(Lubrication::parse(l.as_str()), Some(l));
            assert_eq!(
                serde_json::to_string(&l).unwrap(),
                format!("\"{}\"", l.as_str())
            );
        }
        for s in [Support::Rigid, Support::Flexible] {
            assert_eq!(Support::parse(&s.to_string()), Some(s));
        }
        // ISO 20816-3 numbers its groups 1 (large) and 2 (medium).
        assert_eq!(MachineGroup::from_number(1), Some(MachineGroup::Large));
        assert_eq!(
            MachineGroup::from_number(2).map(MachineGroup::number),
            Some(2)
        );
        assert_eq!(MachineGroup::from_number(3), None);
        assert_eq!(Lubrication::parse("Grease"), None);
    }
}
