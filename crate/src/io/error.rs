use crate::field::FieldError;
use thiserror::Error;

/// Why files could not be read (or options not applied). Every message names the file and,
/// where it applies, the array, column or line, and the rule that was broken, so the user
/// can fix the file instead of guessing.
#[derive(Debug, Error)]
pub enum IoError {
    #[error("no input files were given")]
    NoInput,
    #[error("'{file}': {reason}")]
    Unsupported { file: String, reason: String },
    #[error("'{file}' is empty (0 bytes of data)")]
    EmptyFile { file: String },
    #[error("'{file}': array '{array}': {reason}")]
    Npy { file: String, array: String, reason: String },
    #[error("'{file}' is not a readable .npz (zip) archive: {reason}")]
    Zip { file: String, reason: String },
    #[error("'{file}' has no array '{name}' (case-insensitive); the arrays found are: {found}")]
    MissingArray { file: String, name: String, found: String },
    #[error("'{file}': {reason}")]
    Layout { file: String, reason: String },
    #[error("'{file}' line {line}: {reason}")]
    Line { file: String, line: usize, reason: String },
    #[error("'{file}' has no column for {column}; the columns found are: {found}")]
    MissingColumn { file: String, column: String, found: String },
    #[error("file '{file}' has {rows} rows, the others {others}")]
    RowCount { file: String, rows: String, others: String },
    #[error("{what}: the time between snapshots is not known; give Δt (the dt option)")]
    NeedDt { what: String },
    #[error("option {option}: {reason}")]
    BadOption { option: &'static str, reason: String },
    #[error("{context}: {source}")]
    Field {
        context: String,
        #[source]
        source: FieldError,
    },
    #[error("cannot read '{path}': {reason}")]
    Read { path: String, reason: String },
}

impl IoError {
    /// Wraps a data-model error with the name of what was being read.
    pub(crate) fn field(context: impl Into<String>, source: FieldError) -> IoError {
        IoError::Field { context: context.into(), source }
    }
}

/// `3998` → `"3,998"`: counts in messages are read by people.
pub(crate) fn group_digits(n: usize) -> String {
    let s = n.to_string();
    let mut out = String::with_capacity(s.len() + s.len() / 3);
    for (i, c) in s.chars().enumerate() {
        if i > 0 && (s.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::group_digits;

    #[test]
    fn groups_thousands() {
        assert_eq!(group_digits(0), "0");
        assert_eq!(group_digits(999), "999");
        assert_eq!(group_digits(3998), "3,998");
        assert_eq!(group_digits(1234567), "1,234,567");
    }
}
