//! H.264 bitstream plumbing for the built-in reader: length-prefixed NAL units (as stored in MP4)
//! to start-code form, and the slice type of a slice NAL unit (ITU-T H.264 §7.3.3: `first_mb_in_slice`
//! then `slice_type`, both Exp-Golomb coded, §9.1).

/// Start-code prefix of Annex B byte streams.
const START: [u8; 4] = [0, 0, 0, 1];

/// Append `nal` to `out` in start-code form.
pub fn push_nal(out: &mut Vec<u8>, nal: &[u8]) {
    out.extend_from_slice(&START);
    out.extend_from_slice(nal);
}

/// Split a length-prefixed sample into NAL units; `None` when the lengths overrun the sample.
pub fn split_length_prefixed(sample: &[u8], len_size: usize) -> Option<Vec<&[u8]>> {
    let mut out = Vec::new();
    let mut rest = sample;
    while !rest.is_empty() {
        if rest.len() < len_size || len_size == 0 || len_size > 4 {
            return None;
        }
        let n = rest[..len_size]
            .iter()
            .fold(0usize, |a, &b| (a << 8) | b as usize);
        rest = &rest[len_size..];
        if n > rest.len() {
            return None;
        }
        out.push(&rest[..n]);
        rest = &rest[n..];
    }
    Some(out)
}

/// Kinds of coded slice.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SliceKind {
    P,
    B,
    I,
    Sp,
    Si,
}

struct Bits<'a> {
    data: &'a [u8],
    pos: usize,
}

impl Bits<'_> {
    fn bit(&mut self) -> Option<u32> {
        let byte = *self.data.get(self.pos / 8)?;
        let b = (byte >> (7 - self.pos % 8)) & 1;
        self.pos += 1;
        Some(b as u32)
    }
    fn ue(&mut self) -> Option<u32> {
        let mut zeros = 0;
        while self.bit()? == 0 {
            zeros += 1;
            if zeros > 31 {
                return None;
            }
        }
        let mut v = 0u32;
        for _ in 0..zeros {
            v = (v << 1) | self.bit()?;
        }
        Some((1u32 << zeros) - 1 + v)
    }
}

/// The slice type of a coded-slice NAL unit (types 1 and 5), `None` for other units.
pub fn slice_kind(nal: &[u8]) -> Option<SliceKind> {
    let t = nal.first()? & 0x1f;
    if t != 1 && t != 5 {
        return None;
    }
    // Remove emulation-prevention bytes (00 00 03) from the first bytes of the header.
    let mut rbsp = Vec::with_capacity(16);
    let mut zeros = 0;
    for &b in nal.iter().skip(1).take(24) {
        if zeros >= 2 && b == 3 {
            zeros = 0;
            continue;
        }
        zeros = if b == 0 { zeros + 1 } else { 0 };
        rbsp.push(b);
    }
    let mut r = Bits {
        data: &rbsp,
        pos: 0,
    };
    r.ue()?;
    Some(match r.ue()? % 5 {
        0 => SliceKind::P,
        1 => SliceKind::B,
        2 => SliceKind::I,
        3 => SliceKind::Sp,
        _ => SliceKind::Si,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exp_golomb_slice_types() {
        // first_mb_in_slice = 0 ("1"), slice_type = 7 (I, "0001000"): bits 1000 1000 -> 0x88.
        assert_eq!(slice_kind(&[0x65, 0x88, 0x80]), Some(SliceKind::I));
        // first_mb = 0 ("1"), slice_type = 1 (B, "010"): 1010 0000 -> 0xA0.
        assert_eq!(slice_kind(&[0x01, 0xA0]), Some(SliceKind::B));
        // slice_type = 0 (P, "1"): 11 -> 0xC0.
        assert_eq!(slice_kind(&[0x41, 0xC0]), Some(SliceKind::P));
        assert_eq!(slice_kind(&[0x67, 0xff]), None);
    }

    #[test]
    fn length_prefixed_split() {
        let s = [0, 0, 0, 2, 0x65, 1, 0, 0, 0, 1, 0x41];
        let v = split_length_prefixed(&s, 4).unwrap();
        assert_eq!(v, vec![&[0x65u8, 1][..], &[0x41u8][..]]);
        assert!(split_length_prefixed(&[0, 0, 0, 9, 1], 4).is_none());
    }
}
