//! Natural file-name order: runs of digits compare by their value, so `img2` sorts before `img10`.

use std::cmp::Ordering;

/// Compare two names with digit runs taken as numbers (leading zeros break ties), the rest by
/// character.
pub fn natural_cmp(a: &str, b: &str) -> Ordering {
    let (mut a, mut b) = (a.as_bytes(), b.as_bytes());
    loop {
        match (a.first(), b.first()) {
            (None, None) => return Ordering::Equal,
            (None, Some(_)) => return Ordering::Less,
            (Some(_), None) => return Ordering::Greater,
            (Some(x), Some(y)) if x.is_ascii_digit() && y.is_ascii_digit() => {
                let da = a.iter().take_while(|c| c.is_ascii_digit()).count();
                let db = b.iter().take_while(|c| c.is_ascii_digit()).count();
                let (na, nb) = (&a[..da], &b[..db]);
                let ta = trim_zeros(na);
                let tb = trim_zeros(nb);
                let ord = ta
                    .len()
                    .cmp(&tb.len())
                    .then_with(|| ta.cmp(tb))
                    .then_with(|| da.cmp(&db));
                if ord != Ordering::Equal {
                    return ord;
                }
                a = &a[da..];
                b = &b[db..];
            }
            (Some(x), Some(y)) => {
                if x != y {
                    return x.cmp(y);
                }
                a = &a[1..];
                b = &b[1..];
            }
        }
    }
}

fn trim_zeros(d: &[u8]) -> &[u8] {
    let k = d.iter().take_while(|&&c| c == b'0').count();
    &d[k..]
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn digits_compare_by_value() {
        let mut v = vec!["img10.png", "img2.png", "img1.png", "img02.png", "a.png"];
        v.sort_by(|a, b| natural_cmp(a, b));
        assert_eq!(
            v,
            ["a.png", "img1.png", "img2.png", "img02.png", "img10.png"]
        );
        assert_eq!(natural_cmp("f_9_b", "f_10_a"), Ordering::Less);
        assert_eq!(natural_cmp("x", "x"), Ordering::Equal);
    }
}
