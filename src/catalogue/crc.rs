//! CRC-32 (the IEEE 802.3 / zlib polynomial, reflected, 0xEDB88320) used to checksum every
//! header, index and chunk of a catalogue file. Small and dependency-free; it detects corruption,
//! it does not authenticate anything.

/// Lookup table for one byte at a time, built at compile time.
const TABLE: [u32; 256] = build_table();

const fn build_table() -> [u32; 256] {
    let mut table = [0u32; 256];
    let mut i = 0;
    while i < 256 {
        let mut c = i as u32;
        let mut k = 0;
        while k < 8 {
            c = if c & 1 != 0 {
                0xEDB8_8320 ^ (c >> 1)
            } else {
                c >> 1
            };
            k += 1;
        }
        table[i] = c;
        i += 1;
    }
    table
}

/// CRC-32 of `bytes` (initial value and final xor 0xFFFFFFFF, as in zlib and PNG).
pub fn crc32(bytes: &[u8]) -> u32 {
    let mut c = 0xFFFF_FFFFu32;
    for &b in bytes {
        c = TABLE[((c ^ b as u32) & 0xFF) as usize] ^ (c >> 8);
    }
    c ^ 0xFFFF_FFFF
}

#[cfg(test)]
mod tests {
    use super::crc32;

    #[test]
    fn check_value_of_123456789() {
        // Published check value of CRC-32/ISO-HDLC (Greg Cook, "Catalogue of parametrised CRC
        // algorithms"; also the zlib/PNG CRC): CRC-32("123456789") = 0xCBF43926.
        assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
    }

    #[test]
    fn empty_input_is_zero() {
        // Same catalogue: the CRC of no bytes is init ^ xorout = 0.
        assert_eq!(crc32(b""), 0);
    }

    #[test]
    fn one_flipped_bit_changes_the_value() {
        // A CRC detects every single-bit error (common practice, no source beyond the definition).
        let data = b"the quick brown fox".to_vec();
        let base = crc32(&data);
        for i in 0..data.len() * 8 {
            let mut d = data.clone();
            d[i / 8] ^= 1 << (i % 8);
            assert_ne!(crc32(&d), base);
        }
    }
}
