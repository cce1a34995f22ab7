//! One text table: finds the separator, the header and the data rows, and reads the columns
//! that matter.

use super::header::{column, merge_decorations, Column, Role};
use crate::io::IoError;

/// How cells are separated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum Sep {
    Char(char),
    Whitespace,
}

/// The columns of one file, one entry per data row.
#[derive(Debug, Clone)]
pub(crate) struct Table {
    pub x: Vec<f64>,
    pub y: Vec<f64>,
    pub u: Vec<f64>,
    pub v: Vec<f64>,
    pub t: Option<Vec<f64>>,
    /// `false` = the row's validity column marks the vector as bad.
    pub valid: Option<Vec<bool>>,
    /// 1-based source line of each row.
    pub lines: Vec<usize>,
    pub columns: Vec<Column>,
    /// Index into `columns` of x, y, u, v, t.
    pub index: [Option<usize>; 5],
}

impl Table {
    /// The header column that holds `role`.
    pub(crate) fn column_of(&self, role: Role) -> Option<&Column> {
        let k = match role {
            Role::X => 0,
            Role::Y => 1,
            Role::U => 2,
            Role::V => 3,
            Role::T => 4,
            Role::Good | Role::Bad => return None,
        };
        self.index[k].map(|i| &self.columns[i])
    }
}

/// Bytes to text: UTF-8 (with or without a byte-order mark), UTF-16 with a byte-order mark,
/// else Latin-1 (older Windows exports write `µ` that way).
fn decode(bytes: &[u8]) -> String {
    if let Some(rest) = bytes.strip_prefix(b"\xef\xbb\xbf") {
        return String::from_utf8_lossy(rest).into_owned();
    }
    let utf16 = |rest: &[u8], le: bool| {
        let units: Vec<u16> = rest
            .chunks_exact(2)
            .map(|c| {
                if le {
                    u16::from_le_bytes([c[0], c[1]])
                } else {
                    u16::from_be_bytes([c[0], c[1]])
                }
            })
            .collect();
        String::from_utf16_lossy(&units)
    };
    if let Some(rest) = bytes.strip_prefix(b"\xff\xfe") {
        return utf16(rest, true);
    }
    if let Some(rest) = bytes.strip_prefix(b"\xfe\xff") {
        return utf16(rest, false);
    }
    match std::str::from_utf8(bytes) {
        Ok(s) => s.to_string(),
        Err(_) => bytes.iter().map(|&b| b as char).collect(),
    }
}

fn is_comment(line: &str) -> bool {
    let t = line.trim_start();
    t.starts_with('#') || t.starts_with('%')
}

fn split(line: &str, sep: Sep) -> Vec<&str> {
    match sep {
        Sep::Whitespace => line.split_whitespace().collect(),
        Sep::Char(c) => line.split(c).map(|f| f.trim().trim_matches('"').trim()).collect(),
    }
}

/// Parses a number; with `decimal_comma`, `1,5` reads as 1.5.
fn number(cell: &str, decimal_comma: bool) -> Option<f64> {
    match cell.parse::<f64>() {
        Ok(v) => Some(v),
        Err(_) if decimal_comma && cell.contains(',') && !cell.contains('.') => {
            cell.replacen(',', ".", 1).parse().ok()
        }
        Err(_) => None,
    }
}

/// The separator of the sample of (mostly data) lines: tab, then semicolon, then comma, if
/// more than half of the lines contain it the same nonzero number of times; else runs of
/// whitespace.
fn detect_sep(sample: &[&str]) -> Sep {
    for c in ['\t', ';', ','] {
        let mut counts: Vec<usize> = sample.iter().map(|l| l.matches(c).count()).collect();
        counts.sort_unstable();
        // The most frequent count, and how many lines have it.
        let (mut best, mut best_n, mut k) = (0, 0, 0);
        while k < counts.len() {
            let run = counts[k..].iter().take_while(|&&n| n == counts[k]).count();
            if run > best_n {
                (best, best_n) = (counts[k], run);
            }
            k += run;
        }
        if best > 0 && 2 * best_n > sample.len() {
            return Sep::Char(c);
        }
    }
    Sep::Whitespace
}

/// `true`/`false` as some tools write validity flags.
fn flag_word(cell: &str) -> Option<f64> {
    if cell.eq_ignore_ascii_case("true") {
        Some(1.0)
    } else if cell.eq_ignore_ascii_case("false") {
        Some(0.0)
    } else {
        None
    }
}

/// A data row: every non-empty cell a number (or a true/false flag), and at least three
/// numbers. Preamble lines such as an image size ("1024 768") do not qualify; a table
/// that lacks one of x, y, u, v still does, so the missing column can be named.
fn is_data(cells: &[&str], decimal_comma: bool) -> bool {
    let mut numbers = 0;
    for c in cells {
        if c.is_empty() || flag_word(c).is_some() {
            continue;
        }
        if number(c, decimal_comma).is_none() {
            return false;
        }
        numbers += 1;
    }
    numbers >= 3
}

/// Whether a header names all of x, y, u and v.
fn names_all(columns: &[Column]) -> bool {
    [Role::X, Role::Y, Role::U, Role::V].iter().all(|r| columns.iter().any(|c| c.role == Some(*r)))
}

/// Header cells of a line (comment markers removed).
fn header_labels(line: &str, sep: Sep) -> Vec<String> {
    let text = line.trim_start().trim_start_matches(['#', '%']).trim();
    match sep {
        Sep::Whitespace => merge_decorations(text.split_whitespace().collect()),
        Sep::Char(_) => split(text, sep).iter().map(|s| s.to_string()).collect(),
    }
}

/// Reads a table. `file` names it in messages.
pub(crate) fn parse_table(file: &str, bytes: &[u8]) -> Result<Table, IoError> {
    if bytes.is_empty() {
        return Err(IoError::EmptyFile { file: file.into() });
    }
    let layout = |reason: String| IoError::Layout { file: file.into(), reason };
    let text = decode(bytes);
    let lines: Vec<&str> = text.lines().collect();
    let content: Vec<usize> = (0..lines.len())
        .filter(|&i| !lines[i].trim().is_empty() && !is_comment(lines[i]))
        .collect();
    if content.is_empty() {
        return Err(layout("holds no data: every line is blank or a comment".into()));
    }
    // Data lines are the bulk of the file and sit at its end: sample them there.
    let sample: Vec<&str> = content.iter().rev().take(20).map(|&i| lines[i]).collect();
    let sep = detect_sep(&sample);
    let decimal_comma = matches!(sep, Sep::Char(';') | Sep::Char('\t'));

    let first_data = content
        .iter()
        .copied()
        .find(|&i| is_data(&split(lines[i], sep), decimal_comma))
        .ok_or_else(|| {
            layout("has no data rows (lines of numbers separated by commas, semicolons, tabs or spaces)".into())
        })?;
    // The header is the nearest line above the data that names x, y, u and v (it may be a
    // comment line); if none does, the nearest non-comment line is reported.
    let header_line = (0..first_data)
        .rev()
        .filter(|&i| !lines[i].trim().is_empty())
        .find(|&i| {
            let cols: Vec<Column> =
                header_labels(lines[i], sep).iter().map(|l| column(l)).collect();
            names_all(&cols)
        })
        .or_else(|| {
            (0..first_data).rev().find(|&i| !lines[i].trim().is_empty() && !is_comment(lines[i]))
        })
        .ok_or_else(|| {
            layout(format!(
                "has no header line before the data (line {}); the columns must be named, \
                 e.g. 'x,y,u,v'",
                first_data + 1
            ))
        })?;
    let labels = header_labels(lines[header_line], sep);
    let columns: Vec<Column> = labels.iter().map(|l| column(l)).collect();
    let found = || labels.iter().map(|l| format!("'{l}'")).collect::<Vec<_>>().join(", ");
    let find = |role: Role| -> Result<Option<usize>, IoError> {
        let hits: Vec<usize> =
            (0..columns.len()).filter(|&i| columns[i].role == Some(role)).collect();
        match hits[..] {
            [] => Ok(None),
            [i] => Ok(Some(i)),
            [i, j, ..] => Err(layout(format!(
                "columns '{}' and '{}' both look like {}; rename one",
                columns[i].label,
                columns[j].label,
                role.describe()
            ))),
        }
    };
    let mut index = [None; 5];
    for (k, role) in [Role::X, Role::Y, Role::U, Role::V, Role::T].into_iter().enumerate() {
        index[k] = find(role)?;
        if k < 4 && index[k].is_none() {
            return Err(IoError::MissingColumn {
                file: file.into(),
                column: role.describe().into(),
                found: format!("{} (header on line {})", found(), header_line + 1),
            });
        }
    }
    let flags: Vec<(usize, bool)> = (0..columns.len())
        .filter_map(|i| match columns[i].role {
            Some(Role::Good) => Some((i, true)),
            Some(Role::Bad) => Some((i, false)),
            _ => None,
        })
        .collect();

    let n_rows = content.iter().filter(|&&i| i >= first_data).count();
    let mut cols: [Vec<f64>; 5] = Default::default();
    for (k, c) in cols.iter_mut().enumerate() {
        if index[k].is_some() {
            c.reserve(n_rows);
        }
    }
    let mut valid = if flags.is_empty() { None } else { Some(Vec::with_capacity(n_rows)) };
    let mut row_lines = Vec::with_capacity(n_rows);
    let line_err =
        |line: usize, reason: String| IoError::Line { file: file.into(), line: line + 1, reason };
    for &li in content.iter().filter(|&&i| i >= first_data) {
        let cells = split(lines[li], sep);
        let cell = |col: usize| -> Result<&str, IoError> {
            cells.get(col).copied().ok_or_else(|| {
                line_err(
                    li,
                    format!(
                        "has {} cells but column '{}' is number {} of the header",
                        cells.len(),
                        columns[col].label,
                        col + 1
                    ),
                )
            })
        };
        let value = |col: usize, empty_is_nan: bool| -> Result<f64, IoError> {
            let c = cell(col)?;
            if c.is_empty() && empty_is_nan {
                return Ok(f64::NAN);
            }
            let flag = || flag_word(c).filter(|_| flags.iter().any(|&(f, _)| f == col));
            number(c, decimal_comma).or_else(flag).ok_or_else(|| {
                line_err(
                    li,
                    format!("column '{}' holds '{c}', which is not a number", columns[col].label),
                )
            })
        };
        for k in 0..5 {
            if let Some(col) = index[k] {
                // An empty or NaN velocity is a missing vector; coordinates and times must
                // be finite numbers.
                let is_velocity = k == 2 || k == 3;
                let x = value(col, is_velocity)?;
                if !is_velocity && !x.is_finite() {
                    return Err(line_err(
                        li,
                        format!(
                            "column '{}' holds {x}; coordinates and times must be finite numbers",
                            columns[col].label
                        ),
                    ));
                }
                cols[k].push(x);
            }
        }
        if let Some(valid) = valid.as_mut() {
            let mut ok = true;
            for &(col, good_when_nonzero) in &flags {
                let f = value(col, false)?;
                ok &= (f != 0.0) == good_when_nonzero;
            }
            valid.push(ok);
        }
        row_lines.push(li + 1);
    }
    let [x, y, u, v, t] = cols;
    Ok(Table { x, y, u, v, t: index[4].map(|_| t), valid, lines: row_lines, columns, index })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table(text: &str) -> Result<Table, IoError> {
        parse_table("f.csv", text.as_bytes())
    }

    #[test]
    fn separators_and_decorations() {
        let cases = [
            "x [mm],y [mm],u [m/s],v [m/s]\n0,0,1.5,2\n1,0,3,4\n",
            "# exported field\n% another comment\nx;y;u;v\n0;0;1,5;2\n1;0;3;4\n",
            "x\ty\tu\tv\n0\t0\t1,5\t2\n1\t0\t3\t4\n",
            "title line\nx [mm] y [mm] u [m/s] v [m/s]\n  0 0 1.5 2\n 1 0 3 4\n",
            "\"x\",\"y\",\"u\",\"v\"\n0,0,1.5,2\n\n1,0,3,4\n",
            "# x y u v\n0 0 1.5 2\n1 0 3 4\n",
        ];
        for text in cases {
            let t = table(text).unwrap_or_else(|e| panic!("{text:?}: {e}"));
            assert_eq!(t.x, [0.0, 1.0], "{text:?}");
            assert_eq!(t.u, [1.5, 3.0], "{text:?}");
            assert_eq!(t.v, [2.0, 4.0], "{text:?}");
        }
        let t = table(cases[0]).unwrap();
        assert_eq!(t.column_of(Role::X).unwrap().unit.as_deref(), Some("mm"));
        assert_eq!(t.lines, [2, 3]);
    }

    #[test]
    fn column_order_extra_columns_and_flags() {
        let t = table("i,V,flag,U,Y,X,vort\n1,2,0,3,4,5,9\n2,6,1,7,8,9,9\n").unwrap();
        assert_eq!((t.x.clone(), t.y.clone()), (vec![5.0, 9.0], vec![4.0, 8.0]));
        assert_eq!((t.u.clone(), t.v.clone()), (vec![3.0, 7.0], vec![2.0, 6.0]));
        assert_eq!(t.valid, Some(vec![true, false]));
        let t = table("x,y,u,v,valid,t\n0,0,1,1,True,0.5\n1,0,,NaN,0,0.5\n").unwrap();
        assert_eq!(t.valid, Some(vec![true, false]));
        assert!(t.u[1].is_nan() && t.v[1].is_nan());
        assert_eq!(t.t, Some(vec![0.5, 0.5]));
    }

    #[test]
    fn malformed_tables_are_reported() {
        let e = table("x,y,u\n0,0,1\n1,1,1\n").unwrap_err().to_string();
        assert!(e.contains("no column for v") && e.contains("'x', 'y', 'u'"), "{e}");
        let e = table("x,y,u,v\n0,0,1,1\n1,0,abc,1\n").unwrap_err().to_string();
        assert!(e.contains("line 3") && e.contains("'abc'") && e.contains("column 'u'"), "{e}");
        let e = table("x,y,u,v\n0,0,1,1\n1,0,1\n").unwrap_err().to_string();
        assert!(e.contains("line 3") && e.contains("3 cells"), "{e}");
        let e = table("0,0,1,1\n1,0,1,1\n").unwrap_err().to_string();
        assert!(e.contains("no header"), "{e}");
        let e = table("x,y,u,v\n# a comment between\n1024,768\n0,0,1,1\n1,0,1,1\n").unwrap();
        assert_eq!(e.lines, [4, 5]);
        let e = table("x,y,u,v,Vx\n0,0,1,1,1\n").unwrap_err().to_string();
        assert!(e.contains("'u' and 'Vx'"), "{e}");
        let e = table("# only a comment\n\n").unwrap_err().to_string();
        assert!(e.contains("no data"), "{e}");
        let e = table("x,y,u,v\n").unwrap_err().to_string();
        assert!(e.contains("no data rows"), "{e}");
        assert!(matches!(parse_table("e.csv", b""), Err(IoError::EmptyFile { .. })));
        let e = table("x,y,u,v\n0,0,1,1\nnan,0,1,1\n").unwrap_err().to_string();
        assert!(e.contains("line 3") && e.contains("column 'x' holds NaN"), "{e}");
        let e = table("x,y,u,v\n0,,1,1\n1,0,1,1\n").unwrap_err().to_string();
        assert!(e.contains("line 2") && e.contains("column 'y' holds ''"), "{e}");
    }

    #[test]
    fn encodings() {
        let mut utf16 = vec![0xff, 0xfe];
        for c in "x,y,u,v\n0,0,1,2\n1,0,3,4\n".encode_utf16() {
            utf16.extend_from_slice(&c.to_le_bytes());
        }
        assert_eq!(parse_table("w.csv", &utf16).unwrap().v, [2.0, 4.0]);
        // Latin-1 'µ' (0xB5) in a header.
        let latin1 = b"x [\xb5m],y [\xb5m],u,v\n0,0,1,2\n1,0,3,4\n";
        let t = parse_table("l.csv", latin1).unwrap();
        assert_eq!(t.column_of(Role::X).unwrap().unit.as_deref(), Some("µm"));
    }
}
