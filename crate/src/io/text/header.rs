//! Column names of text tables: which column is x, y, u, v, t or a validity flag, and what
//! units its decoration (`x [mm]`, `U (m/s)`, `x(mm)`) states.

use crate::field::{LengthUnit, TimeUnit};

/// What a column holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Role {
    X,
    Y,
    U,
    V,
    T,
    /// Nonzero = the vector is good.
    Good,
    /// Nonzero = the vector is bad.
    Bad,
}

impl Role {
    pub(crate) fn describe(self) -> &'static str {
        match self {
            Role::X => "x",
            Role::Y => "y",
            Role::U => "u (x velocity)",
            Role::V => "v (y velocity)",
            Role::T => "t (time)",
            Role::Good => "validity",
            Role::Bad => "flag",
        }
    }
}

/// One header cell, split into its name and unit decoration.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Column {
    /// The header text as written (quotes removed), for messages.
    pub label: String,
    pub role: Option<Role>,
    /// Text inside the first `[...]` or `(...)`, if any.
    pub unit: Option<String>,
}

/// Splits `x [mm]`, `U (m/s)`, `x(mm)` into name and unit.
fn split_decoration(label: &str) -> (String, Option<String>) {
    match label.find(['[', '(']) {
        Some(open) => {
            let close = if label.as_bytes()[open] == b'[' { ']' } else { ')' };
            let inner = &label[open + 1..];
            let unit = inner.rfind(close).map_or(inner, |e| &inner[..e]);
            (label[..open].trim().to_string(), Some(unit.trim().to_string()))
        }
        None => (label.trim().to_string(), None),
    }
}

/// The role of a column name: the usual spellings of PIV and CFD exports, compared without
/// case, spaces, underscores, hyphens and dots (so `X-Velocity`, `vel_x`, `Vx` all match).
fn role_of(name: &str) -> Option<Role> {
    let key: String = name
        .chars()
        .filter(|c| !matches!(c, ' ' | '_' | '-' | '.' | '"' | '\''))
        .collect::<String>()
        .to_lowercase();
    let role = match key.as_str() {
        "x" | "xpos" | "posx" | "xposition" | "positionx" | "xcoord" | "xcoordinate" | "coordx"
        | "coordinatex" => Role::X,
        "y" | "ypos" | "posy" | "yposition" | "positiony" | "ycoord" | "ycoordinate" | "coordy"
        | "coordinatey" => Role::Y,
        "u" | "vx" | "ux" | "velx" | "velocityx" | "xvelocity" | "xvel" | "uvel" | "velu" => {
            Role::U
        }
        "v" | "vy" | "uy" | "vely" | "velocityy" | "yvelocity" | "yvel" | "vvel" | "velv" => {
            Role::V
        }
        "t" | "time" => Role::T,
        "valid" | "validity" | "ok" | "isvalid" => Role::Good,
        "flag" | "flags" | "invalid" | "bad" | "outlier" | "isoutlier" => Role::Bad,
        _ => return None,
    };
    Some(role)
}

/// Reads one header cell.
pub(crate) fn column(label: &str) -> Column {
    let label = label.trim().trim_matches(['"', '\'']).trim().to_string();
    let (name, unit) = split_decoration(&label);
    Column { role: role_of(&name), unit, label }
}

/// Whitespace-separated headers split `x [mm]` into two tokens: glue decorations back on.
pub(crate) fn merge_decorations(tokens: Vec<&str>) -> Vec<String> {
    let mut out: Vec<String> = Vec::with_capacity(tokens.len());
    for tok in tokens {
        match out.last_mut() {
            Some(prev) if tok.starts_with(['[', '(']) && !prev.contains(['[', '(']) => {
                prev.push(' ');
                prev.push_str(tok);
            }
            _ => out.push(tok.to_string()),
        }
    }
    out
}

/// A decoration that says "no unit".
fn is_unitless(s: &str) -> bool {
    matches!(s.trim(), "" | "-" | "1" | "none" | "unitless" | "dimensionless")
}

/// Length unit of a coordinate decoration.
pub(crate) fn length_unit(s: &str) -> Result<LengthUnit, String> {
    s.parse::<LengthUnit>()
}

/// Time unit of a time decoration.
pub(crate) fn time_unit(s: &str) -> Result<TimeUnit, String> {
    s.parse::<TimeUnit>()
}

/// What a velocity decoration says.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum VelocityUnit {
    /// A length over a time, e.g. `mm/s`; a lone length (`m`) has unitless time, `1/s` a
    /// unitless length.
    Of(LengthUnit, TimeUnit),
    /// `[-]`, `[1]`: the same units as the coordinates and times.
    Plain,
}

/// Parses `m/s`, `mm/ms`, `m s^-1`, `m s-1`, `m·s⁻¹`, `1/s`, `m`, `-`.
pub(crate) fn velocity_unit(s: &str) -> Result<VelocityUnit, String> {
    let t = s.trim();
    if is_unitless(t) {
        return Ok(VelocityUnit::Plain);
    }
    let (num, den) = if let Some((a, b)) = t.split_once('/') {
        (a.trim().to_string(), Some(b.trim().to_string()))
    } else {
        let norm = t.replace(['·', '*'], " ").replace("⁻¹", "^-1");
        let mut parts = norm.split_whitespace();
        match (parts.next(), parts.next(), parts.next()) {
            (Some(a), Some(b), None) => match b.strip_suffix("^-1").or(b.strip_suffix("-1")) {
                Some(time) => (a.to_string(), Some(time.to_string())),
                None => return Err(format!("'{s}' is not a velocity unit")),
            },
            (Some(a), None, None) => (a.to_string(), None),
            _ => return Err(format!("'{s}' is not a velocity unit")),
        }
    };
    let l = num
        .parse::<LengthUnit>()
        .map_err(|_| format!("'{s}' is not a velocity unit (unknown length '{num}')"))?;
    let time = match den {
        Some(d) => d
            .parse::<TimeUnit>()
            .map_err(|_| format!("'{s}' is not a velocity unit (unknown time '{d}')"))?,
        None => TimeUnit::Unitless,
    };
    Ok(VelocityUnit::Of(l, time))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decorated_names_are_recognised() {
        // Header spellings as PIV/CFD text exports commonly write them (common practice).
        for (label, role, unit) in [
            ("x [mm]", Role::X, Some("mm")),
            ("\"x\"", Role::X, None),
            ("x(mm)", Role::X, Some("mm")),
            ("U (m/s)", Role::U, Some("m/s")),
            ("Vx [m/s]", Role::U, Some("m/s")),
            ("X-Velocity", Role::U, None),
            ("y-coordinate", Role::Y, None),
            ("vel_y", Role::V, None),
            ("Time [ms]", Role::T, Some("ms")),
            ("Valid", Role::Good, None),
            ("outlier", Role::Bad, None),
        ] {
            let c = column(label);
            assert_eq!(c.role, Some(role), "{label}");
            assert_eq!(c.unit.as_deref(), unit, "{label}");
        }
        assert_eq!(column("vorticity [1/s]").role, None);
        assert_eq!(column("w").role, None);
    }

    #[test]
    fn whitespace_headers_keep_their_units() {
        let merged =
            merge_decorations("x [mm] y [mm] u [m/s] v(m/s) valid".split_whitespace().collect());
        assert_eq!(merged, ["x [mm]", "y [mm]", "u [m/s]", "v(m/s)", "valid"]);
    }

    #[test]
    fn velocity_units() {
        use LengthUnit as L;
        use TimeUnit as T;
        assert_eq!(velocity_unit("m/s"), Ok(VelocityUnit::Of(L::M, T::S)));
        assert_eq!(velocity_unit("mm/ms"), Ok(VelocityUnit::Of(L::Mm, T::Ms)));
        assert_eq!(velocity_unit("m s^-1"), Ok(VelocityUnit::Of(L::M, T::S)));
        assert_eq!(velocity_unit("m·s⁻¹"), Ok(VelocityUnit::Of(L::M, T::S)));
        assert_eq!(velocity_unit("1/s"), Ok(VelocityUnit::Of(L::Unitless, T::S)));
        assert_eq!(velocity_unit("m"), Ok(VelocityUnit::Of(L::M, T::Unitless)));
        assert_eq!(velocity_unit("-"), Ok(VelocityUnit::Plain));
        assert!(velocity_unit("px/frame").unwrap_err().contains("px"));
    }
}
