//! Units of the user's files. The core converts to SI on load and computes in SI; these
//! records say what the source used and label outputs.

use serde::{Deserialize, Serialize};
use std::fmt;
use std::str::FromStr;

/// A length unit a velocity file may use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum LengthUnit {
    #[default]
    M,
    Cm,
    Mm,
    Um,
    /// Dimensionless lengths (CFD in units of a reference length). Left as they are.
    Unitless,
}

/// A time unit a velocity file may use.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "lowercase")]
pub enum TimeUnit {
    #[default]
    S,
    Ms,
    Us,
    /// Dimensionless time (CFD in convective units). Left as it is.
    Unitless,
}

impl LengthUnit {
    /// Metres per one of this unit (1 for [`LengthUnit::Unitless`]).
    pub fn to_si(self) -> f64 {
        match self {
            LengthUnit::M | LengthUnit::Unitless => 1.0,
            LengthUnit::Cm => 1e-2,
            LengthUnit::Mm => 1e-3,
            LengthUnit::Um => 1e-6,
        }
    }
    pub fn symbol(self) -> &'static str {
        match self {
            LengthUnit::M => "m",
            LengthUnit::Cm => "cm",
            LengthUnit::Mm => "mm",
            LengthUnit::Um => "µm",
            LengthUnit::Unitless => "1",
        }
    }
}

impl TimeUnit {
    /// Seconds per one of this unit (1 for [`TimeUnit::Unitless`]).
    pub fn to_si(self) -> f64 {
        match self {
            TimeUnit::S | TimeUnit::Unitless => 1.0,
            TimeUnit::Ms => 1e-3,
            TimeUnit::Us => 1e-6,
        }
    }
    pub fn symbol(self) -> &'static str {
        match self {
            TimeUnit::S => "s",
            TimeUnit::Ms => "ms",
            TimeUnit::Us => "µs",
            TimeUnit::Unitless => "1",
        }
    }
}

impl FromStr for LengthUnit {
    type Err = String;
    /// Accepts the usual spellings, case-insensitive: `m`, `cm`, `mm`, `um`/`µm`/`micron`,
    /// `1`/`-`/`unitless`/`dimensionless`.
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim().to_lowercase().as_str() {
            "m" | "metre" | "meter" | "metres" | "meters" => Ok(LengthUnit::M),
            "cm" => Ok(LengthUnit::Cm),
            "mm" => Ok(LengthUnit::Mm),
            "um" | "µm" | "μm" | "micron" | "microns" => Ok(LengthUnit::Um),
            "1" | "-" | "" | "unitless" | "dimensionless" | "none" => Ok(LengthUnit::Unitless),
            other => {
                Err(format!("unknown length unit '{other}' (expected m, cm, mm, um or unitless)"))
            }
        }
    }
}

impl FromStr for TimeUnit {
    type Err = String;
    /// Accepts `s`, `ms`, `us`/`µs`, `1`/`-`/`unitless`, case-insensitive.
    fn from_str(s: &str) -> Result<Self, String> {
        match s.trim().to_lowercase().as_str() {
            "s" | "sec" | "second" | "seconds" => Ok(TimeUnit::S),
            "ms" => Ok(TimeUnit::Ms),
            "us" | "µs" | "μs" => Ok(TimeUnit::Us),
            "1" | "-" | "" | "unitless" | "dimensionless" | "none" => Ok(TimeUnit::Unitless),
            other => Err(format!("unknown time unit '{other}' (expected s, ms, us or unitless)")),
        }
    }
}

impl fmt::Display for LengthUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}
impl fmt::Display for TimeUnit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.symbol())
    }
}

/// What units a series' numbers are in. After loading, the core's series are always SI
/// (or unitless throughout); `source` remembers what the file used.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
pub struct Units {
    pub length: LengthUnit,
    pub time: TimeUnit,
}

impl Units {
    /// Units of the computation for data that came in `self`: SI unless unitless.
    pub fn computational(self) -> Units {
        Units {
            length: if self.length == LengthUnit::Unitless {
                LengthUnit::Unitless
            } else {
                LengthUnit::M
            },
            time: if self.time == TimeUnit::Unitless { TimeUnit::Unitless } else { TimeUnit::S },
        }
    }
    /// Label of a velocity in these units, e.g. `m/s`.
    pub fn velocity_label(self) -> String {
        match (self.length, self.time) {
            (LengthUnit::Unitless, TimeUnit::Unitless) => "1".into(),
            (l, TimeUnit::Unitless) => l.symbol().into(),
            (LengthUnit::Unitless, t) => format!("1/{}", t.symbol()),
            (l, t) => format!("{}/{}", l.symbol(), t.symbol()),
        }
    }
    /// Label of a rate (vorticity, FTLE), e.g. `1/s`.
    pub fn rate_label(self) -> String {
        match self.time {
            TimeUnit::Unitless => "1".into(),
            t => format!("1/{}", t.symbol()),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_common_spellings() {
        assert_eq!("MM".parse::<LengthUnit>().unwrap(), LengthUnit::Mm);
        assert_eq!("µm".parse::<LengthUnit>().unwrap(), LengthUnit::Um);
        assert_eq!("ms".parse::<TimeUnit>().unwrap(), TimeUnit::Ms);
        assert!("furlong".parse::<LengthUnit>().unwrap_err().contains("furlong"));
    }

    #[test]
    fn labels() {
        let si = Units::default();
        assert_eq!(si.velocity_label(), "m/s");
        assert_eq!(si.rate_label(), "1/s");
        let mm = Units { length: LengthUnit::Mm, time: TimeUnit::Ms };
        assert_eq!(mm.computational(), si);
    }
}
