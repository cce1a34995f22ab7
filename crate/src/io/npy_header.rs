//! The header of a `.npy` file: a Python dict literal such as
//! `{'descr': '<f8', 'fortran_order': False, 'shape': (3, 4), }`.
//!
//! Only the small subset of Python literal syntax that the `.npy` format specification
//! (format versions 1.0–3.0) allows in that dict is parsed: strings in single or double
//! quotes, `True`/`False`, integers (with the `L` suffix old writers put on them), tuples and
//! lists. A list `descr` means a structured dtype, which is reported, not read.

/// A value of the header dict.
#[derive(Debug, Clone, PartialEq)]
enum Lit {
    Str(String),
    Bool(bool),
    Int(u64),
    Seq(Vec<Lit>),
    Other(String),
}

/// What the header says about the array.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Header {
    pub descr: String,
    pub fortran_order: bool,
    pub shape: Vec<usize>,
}

struct Parser<'a> {
    s: &'a [u8],
    pos: usize,
}

impl<'a> Parser<'a> {
    fn skip_ws(&mut self) {
        while self.pos < self.s.len() && self.s[self.pos].is_ascii_whitespace() {
            self.pos += 1;
        }
    }
    fn peek(&mut self) -> Option<u8> {
        self.skip_ws();
        self.s.get(self.pos).copied()
    }
    fn expect(&mut self, c: u8) -> Result<(), String> {
        match self.peek() {
            Some(got) if got == c => {
                self.pos += 1;
                Ok(())
            }
            Some(got) => Err(format!(
                "expected '{}' at character {} but found '{}'",
                c as char, self.pos, got as char
            )),
            None => Err(format!("expected '{}' but the header ended", c as char)),
        }
    }
    fn string(&mut self) -> Result<String, String> {
        let quote = self.s[self.pos];
        self.pos += 1;
        let start = self.pos;
        while self.pos < self.s.len() && self.s[self.pos] != quote {
            if self.s[self.pos] == b'\\' {
                self.pos += 1;
            }
            self.pos += 1;
        }
        if self.pos >= self.s.len() {
            return Err("a quoted string in the header is not closed".into());
        }
        let text = String::from_utf8_lossy(&self.s[start..self.pos]).into_owned();
        self.pos += 1;
        Ok(text)
    }
    fn seq(&mut self, close: u8) -> Result<Vec<Lit>, String> {
        self.pos += 1;
        let mut items = Vec::new();
        loop {
            if self.peek().is_none() {
                return Err("a tuple or list in the header is not closed".into());
            }
            if self.peek() == Some(close) {
                self.pos += 1;
                return Ok(items);
            }
            items.push(self.value()?);
            match self.peek() {
                Some(b',') => self.pos += 1,
                Some(c) if c == close => {}
                Some(c) => {
                    return Err(format!(
                        "unexpected '{}' at character {} inside a tuple or list",
                        c as char, self.pos
                    ))
                }
                None => return Err("a tuple or list in the header is not closed".into()),
            }
        }
    }
    fn value(&mut self) -> Result<Lit, String> {
        match self.peek() {
            Some(b'\'') | Some(b'"') => self.string().map(Lit::Str),
            Some(b'(') => self.seq(b')').map(Lit::Seq),
            Some(b'[') => self.seq(b']').map(Lit::Seq),
            Some(b'{') => Err("nested dicts are not part of the .npy header format".into()),
            Some(c) if c.is_ascii_alphanumeric() || c == b'-' || c == b'+' => {
                let start = self.pos;
                while self.pos < self.s.len()
                    && (self.s[self.pos].is_ascii_alphanumeric()
                        || matches!(self.s[self.pos], b'-' | b'+' | b'_' | b'.'))
                {
                    self.pos += 1;
                }
                let word = String::from_utf8_lossy(&self.s[start..self.pos]).into_owned();
                Ok(match word.as_str() {
                    "True" => Lit::Bool(true),
                    "False" => Lit::Bool(false),
                    w => match w.trim_end_matches(['L', 'l']).parse::<u64>() {
                        Ok(n) => Lit::Int(n),
                        Err(_) => Lit::Other(word),
                    },
                })
            }
            Some(c) => Err(format!("unexpected '{}' at character {}", c as char, self.pos)),
            None => Err("the header ended where a value was expected".into()),
        }
    }
}

/// Parses the header dict. Errors say which key is missing or malformed.
pub(crate) fn parse_header(text: &[u8]) -> Result<Header, String> {
    let mut p = Parser { s: text, pos: 0 };
    p.expect(b'{')?;
    let (mut descr, mut fortran, mut shape) = (None, None, None);
    loop {
        match p.peek() {
            Some(b'}') => break,
            Some(b'\'') | Some(b'"') => {}
            Some(c) => {
                return Err(format!(
                    "expected a quoted key at character {} but found '{}'",
                    p.pos, c as char
                ))
            }
            None => return Err("the header dict is not closed with '}'".into()),
        }
        let key = p.string()?;
        p.expect(b':')?;
        let value = p.value()?;
        match key.as_str() {
            "descr" => descr = Some(value),
            "fortran_order" => fortran = Some(value),
            "shape" => shape = Some(value),
            _ => {} // Later format versions may add keys; they do not change the data.
        }
        match p.peek() {
            Some(b',') => p.pos += 1,
            Some(b'}') => {}
            _ => return Err(format!("expected ',' or '}}' after the value of '{key}'")),
        }
    }
    let descr = match descr {
        Some(Lit::Str(s)) => s,
        Some(Lit::Seq(_)) => {
            return Err("the array has a structured dtype (record fields); only plain numeric, \
                 boolean and string arrays can be read"
                .into())
        }
        Some(other) => return Err(format!("'descr' is not a dtype string: {other:?}")),
        None => return Err("the header has no 'descr' (dtype) entry".into()),
    };
    let fortran_order = match fortran {
        Some(Lit::Bool(b)) => b,
        Some(other) => return Err(format!("'fortran_order' is not True/False: {other:?}")),
        None => return Err("the header has no 'fortran_order' entry".into()),
    };
    let shape = match shape {
        Some(Lit::Seq(items)) => items
            .into_iter()
            .map(|d| match d {
                Lit::Int(n) => {
                    usize::try_from(n).map_err(|_| format!("dimension {n} is too large"))
                }
                other => Err(format!("'shape' holds a non-integer dimension: {other:?}")),
            })
            .collect::<Result<Vec<_>, _>>()?,
        Some(other) => return Err(format!("'shape' is not a tuple: {other:?}")),
        None => return Err("the header has no 'shape' entry".into()),
    };
    Ok(Header { descr, fortran_order, shape })
}

/// Writes the header dict the way the format specification describes it.
pub(crate) fn format_header(descr: &str, shape: &[usize]) -> String {
    let dims = match shape.len() {
        0 => "()".to_string(),
        1 => format!("({},)", shape[0]),
        _ => format!("({})", shape.iter().map(|d| d.to_string()).collect::<Vec<_>>().join(", ")),
    };
    format!("{{'descr': '{descr}', 'fortran_order': False, 'shape': {dims}, }}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parses_what_numpy_writes() {
        // Header text as numpy writes it (the .npy format specification, version 1.0).
        let h = parse_header(b"{'descr': '<f8', 'fortran_order': False, 'shape': (3, 4), }   \n")
            .unwrap();
        assert_eq!(h, Header { descr: "<f8".into(), fortran_order: false, shape: vec![3, 4] });
        let h = parse_header(b"{'descr': '|b1', 'fortran_order': True, 'shape': (5,), }").unwrap();
        assert_eq!((h.shape, h.fortran_order), (vec![5], true));
        let h = parse_header(b"{'descr': '<U2', 'fortran_order': False, 'shape': (), }").unwrap();
        assert!(h.shape.is_empty());
    }

    #[test]
    fn tolerates_old_and_reordered_headers() {
        // Python 2 era writers put an L suffix on longs and used double quotes (from memory).
        let h = parse_header(br#"{"shape": (2L, 3L), "fortran_order": False, "descr": ">i4"}"#)
            .unwrap();
        assert_eq!((h.descr.as_str(), h.shape), (">i4", vec![2, 3]));
    }

    #[test]
    fn reports_malformed_headers() {
        let e = parse_header(b"{'descr': [('a', '<f4')], 'fortran_order': False, 'shape': (2,)}")
            .unwrap_err();
        assert!(e.contains("structured"), "{e}");
        let e = parse_header(b"{'descr': '<f8', 'shape': (3,)}").unwrap_err();
        assert!(e.contains("fortran_order"), "{e}");
        let e = parse_header(b"{'descr': '<f8', 'fortran_order': False, 'shape': (3,").unwrap_err();
        assert!(e.contains("not closed"), "{e}");
        assert!(parse_header(b"not a dict").is_err());
        assert!(parse_header(b"{'descr': '<f8', 'fortran_order': False, 'shape': (x,)}").is_err());
    }

    #[test]
    fn formats_round_trip() {
        for shape in [vec![], vec![7], vec![2, 3, 4]] {
            let text = format_header("<f4", &shape);
            let h = parse_header(text.as_bytes()).unwrap();
            assert_eq!(h.shape, shape);
        }
        assert_eq!(
            format_header("<f8", &[3]),
            "{'descr': '<f8', 'fortran_order': False, 'shape': (3,), }"
        );
    }
}
