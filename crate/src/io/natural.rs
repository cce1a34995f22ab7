//! Natural ordering of file names, so that `frame2` comes before `frame10`: snapshot files
//! are numbered without zero padding as often as with it.

use std::cmp::Ordering;

/// Compares two names piece by piece: runs of digits by numeric value (then by length, so
/// `07` sorts after `7`), other text case-insensitively, and finally the plain byte order so
/// that distinct names never compare equal.
pub fn natural_cmp(a: &str, b: &str) -> Ordering {
    let (ab, bb) = (a.as_bytes(), b.as_bytes());
    let (mut i, mut j) = (0, 0);
    while i < ab.len() && j < bb.len() {
        if ab[i].is_ascii_digit() && bb[j].is_ascii_digit() {
            let (si, sj) = (i, j);
            while i < ab.len() && ab[i].is_ascii_digit() {
                i += 1;
            }
            while j < bb.len() && bb[j].is_ascii_digit() {
                j += 1;
            }
            let (da, db) = (&a[si..i], &b[sj..j]);
            let (ta, tb) = (da.trim_start_matches('0'), db.trim_start_matches('0'));
            let ord = ta
                .len()
                .cmp(&tb.len())
                .then_with(|| ta.cmp(tb))
                .then_with(|| da.len().cmp(&db.len()));
            if ord != Ordering::Equal {
                return ord;
            }
        } else {
            let ord = ab[i].to_ascii_lowercase().cmp(&bb[j].to_ascii_lowercase());
            if ord != Ordering::Equal {
                return ord;
            }
            i += 1;
            j += 1;
        }
    }
    (ab.len() - i).cmp(&(bb.len() - j)).then_with(|| a.cmp(b))
}

#[cfg(test)]
mod tests {
    use super::natural_cmp;

    #[test]
    fn numbers_sort_by_value() {
        // Expected order: common practice for "natural" file ordering.
        let mut names = vec![
            "frame10.csv",
            "frame2.csv",
            "Frame1.csv",
            "frame02.csv",
            "frame100.csv",
            "frame9b.csv",
            "frame9a.csv",
        ];
        names.sort_by(|a, b| natural_cmp(a, b));
        assert_eq!(
            names,
            [
                "Frame1.csv",
                "frame2.csv",
                "frame02.csv",
                "frame9a.csv",
                "frame9b.csv",
                "frame10.csv",
                "frame100.csv"
            ]
        );
        assert_eq!(natural_cmp("a", "a"), std::cmp::Ordering::Equal);
        assert_eq!(natural_cmp("run_b", "run_a"), std::cmp::Ordering::Greater);
        assert_eq!(natural_cmp("x1", "x1y"), std::cmp::Ordering::Less);
    }
}
