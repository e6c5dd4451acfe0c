//! CRC-32 (the IEEE 802.3 / zlib polynomial, reflected, 0xEDB88320) used to checksum every
//! header, index and chunk of a catalogue file. Small and dependency-free; it detects corruption,
//! it does not authenticate anything.

/// Slicing-by-8 tables: `TABLES[0]` is the classic one-byte table; `TABLES[k][b]` is the CRC
/// of byte `b` followed by k zero bytes, so eight bytes are folded per step with independent
/// loads instead of a chain of eight dependent ones (queries checksum every chunk they read).
const TABLES: [[u32; 256]; 8] = build_tables();

const fn build_tables() -> [[u32; 256]; 8] {
    let mut t = [[0u32; 256]; 8];
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
        t[0][i] = c;
        i += 1;
    }
    let mut s = 1;
    while s < 8 {
        let mut i = 0;
        while i < 256 {
            let prev = t[s - 1][i];
            t[s][i] = (prev >> 8) ^ t[0][(prev & 0xFF) as usize];
            i += 1;
        }
        s += 1;
    }
    t
}

/// CRC-32 of `bytes` (initial value and final xor 0xFFFFFFFF, as in zlib and PNG).
pub fn crc32(bytes: &[u8]) -> u32 {
    let t = &TABLES;
    let mut c = 0xFFFF_FFFFu32;
    let mut blocks = bytes.chunks_exact(8);
    for b in &mut blocks {
        let lo = c ^ u32::from_le_bytes([b[0], b[1], b[2], b[3]]);
        let hi = u32::from_le_bytes([b[4], b[5], b[6], b[7]]);
        c = t[7][(lo & 0xFF) as usize]
            ^ t[6][((lo >> 8) & 0xFF) as usize]
            ^ t[5][((lo >> 16) & 0xFF) as usize]
            ^ t[4][(lo >> 24) as usize]
            ^ t[3][(hi & 0xFF) as usize]
            ^ t[2][((hi >> 8) & 0xFF) as usize]
            ^ t[1][((hi >> 16) & 0xFF) as usize]
            ^ t[0][(hi >> 24) as usize];
    }
    for &b in blocks.remainder() {
        c = t[0][((c ^ b as u32) & 0xFF) as usize] ^ (c >> 8);
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

    /// The textbook bit-at-a-time definition, as an independent reference for the tables.
    fn bitwise(bytes: &[u8]) -> u32 {
        let mut c = 0xFFFF_FFFFu32;
        for &b in bytes {
            c ^= b as u32;
            for _ in 0..8 {
                c = if c & 1 != 0 {
                    0xEDB8_8320 ^ (c >> 1)
                } else {
                    c >> 1
                };
            }
        }
        c ^ 0xFFFF_FFFF
    }

    #[test]
    fn sliced_tables_agree_with_the_bitwise_definition_at_every_length_and_alignment() {
        let data: Vec<u8> = (0..300u32).map(|i| (i * 7919 % 251) as u8).collect();
        for start in 0..9 {
            for end in start..data.len() {
                assert_eq!(crc32(&data[start..end]), bitwise(&data[start..end]));
            }
        }
    }
}
