//! NPZ archives: this module owns the container NumPy's `np.savez` writes, a ZIP file holding
//! one `NAME.npy` member per array. We write uncompressed (stored) members, which is what
//! `np.savez` itself writes, and read stored members back, including the ZIP64 size fields
//! NumPy adds. Compressed members (`np.savez_compressed`) are refused with the fix. The layout
//! follows the ZIP File Format Specification (PKWARE, APPNOTE.TXT, version 6.3, sections 4.3
//! and 4.5 (memory)); the checksum is CRC-32 with the reflected polynomial 0xEDB88320.

use super::npy::{read_npy, NpyArray, NpyError};

/// Most members read from or written to one archive (no ZIP64 end record).
pub const MAX_MEMBERS: usize = 65_535;

/// CRC-32 (ISO-HDLC, as ZIP and zlib use it).
pub fn crc32(bytes: &[u8]) -> u32 {
    let mut table = [0u32; 256];
    for (i, t) in table.iter_mut().enumerate() {
        let mut c = i as u32;
        for _ in 0..8 {
            c = if c & 1 != 0 {
                0xEDB8_8320 ^ (c >> 1)
            } else {
                c >> 1
            };
        }
        *t = c;
    }
    let mut c = 0xFFFF_FFFFu32;
    for &b in bytes {
        c = table[((c ^ u32::from(b)) & 0xFF) as usize] ^ (c >> 8);
    }
    c ^ 0xFFFF_FFFF
}

/// An NPZ archive of the given `(name, npy bytes)` members; `.npy` is appended to each name
/// (NumPy's `np.load` strips it again).
///
/// # Errors
/// A message when a member or the archive exceeds the 4 GiB of a plain ZIP, or there are too
/// many members.
pub fn write_npz(members: &[(String, Vec<u8>)]) -> Result<Vec<u8>, String> {
    if members.len() > MAX_MEMBERS {
        return Err(format!(
            "{} arrays are more than one NPZ holds ({MAX_MEMBERS})",
            members.len()
        ));
    }
    let too_big =
        || "an NPZ of more than 4 GiB is not supported; write NPY files instead".to_string();
    let mut out = Vec::new();
    let mut central = Vec::new();
    for (name, data) in members {
        let fname = format!("{name}.npy");
        let offset = u32::try_from(out.len()).map_err(|_| too_big())?;
        let size = u32::try_from(data.len()).map_err(|_| too_big())?;
        let crc = crc32(data);
        let name_len =
            u16::try_from(fname.len()).map_err(|_| format!("array name `{name}` is too long"))?;
        // Local file header: version 2.0, no flags, stored, DOS date 1980-01-01 00:00.
        out.extend_from_slice(&0x0403_4b50u32.to_le_bytes());
        for v in [20u16, 0, 0, 0, 0x21] {
            out.extend_from_slice(&v.to_le_bytes());
        }
        for v in [crc, size, size] {
            out.extend_from_slice(&v.to_le_bytes());
        }
        out.extend_from_slice(&name_len.to_le_bytes());
        out.extend_from_slice(&0u16.to_le_bytes());
        out.extend_from_slice(fname.as_bytes());
        out.extend_from_slice(data);
        // Central directory entry.
        central.extend_from_slice(&0x0201_4b50u32.to_le_bytes());
        for v in [20u16, 20, 0, 0, 0, 0x21] {
            central.extend_from_slice(&v.to_le_bytes());
        }
        for v in [crc, size, size] {
            central.extend_from_slice(&v.to_le_bytes());
        }
        for v in [name_len, 0, 0, 0, 0] {
            central.extend_from_slice(&v.to_le_bytes());
        }
        central.extend_from_slice(&0u32.to_le_bytes());
        central.extend_from_slice(&offset.to_le_bytes());
        central.extend_from_slice(fname.as_bytes());
    }
    let cd_offset = u32::try_from(out.len()).map_err(|_| too_big())?;
    let cd_size = u32::try_from(central.len()).map_err(|_| too_big())?;
    out.extend_from_slice(&central);
    out.extend_from_slice(&0x0605_4b50u32.to_le_bytes());
    let count = members.len() as u16;
    for v in [0u16, 0, count, count] {
        out.extend_from_slice(&v.to_le_bytes());
    }
    out.extend_from_slice(&cd_size.to_le_bytes());
    out.extend_from_slice(&cd_offset.to_le_bytes());
    out.extend_from_slice(&0u16.to_le_bytes());
    Ok(out)
}

fn u16_at(b: &[u8], at: usize) -> Result<u16, String> {
    b.get(at..at + 2)
        .map(|s| u16::from_le_bytes([s[0], s[1]]))
        .ok_or_else(|| format!("NPZ truncated at byte {at}"))
}

fn u32_at(b: &[u8], at: usize) -> Result<u32, String> {
    b.get(at..at + 4)
        .map(|s| u32::from_le_bytes([s[0], s[1], s[2], s[3]]))
        .ok_or_else(|| format!("NPZ truncated at byte {at}"))
}

fn u64_at(b: &[u8], at: usize) -> Result<u64, String> {
    Ok(u64::from(u32_at(b, at)?) | (u64::from(u32_at(b, at + 4)?) << 32))
}

/// One member's place in the archive, from the central directory.
struct Entry {
    name: String,
    method: u16,
    crc: u32,
    size: u64,
    offset: u64,
}

/// The ZIP64 extended-information field overrides the 0xFFFFFFFF placeholders, in order:
/// uncompressed size, compressed size, local header offset.
fn zip64_fix(extra: &[u8], e: &mut Entry, sizes_full: (bool, bool, bool)) -> Result<(), String> {
    let mut at = 0;
    while at + 4 <= extra.len() {
        let id = u16_at(extra, at)?;
        let len = usize::from(u16_at(extra, at + 2)?);
        if id == 1 {
            let mut p = at + 4;
            if sizes_full.0 {
                e.size = u64_at(extra, p)?;
                p += 8;
            }
            if sizes_full.1 {
                p += 8;
            }
            if sizes_full.2 {
                e.offset = u64_at(extra, p)?;
            }
        }
        at += 4 + len;
    }
    Ok(())
}

fn central_directory(b: &[u8]) -> Result<Vec<Entry>, String> {
    let min = 22;
    if b.len() < min {
        return Err("not an NPZ (ZIP) file: too short".into());
    }
    let lowest = b.len().saturating_sub(min + 65_535);
    let eocd = (lowest..=b.len() - min)
        .rev()
        .find(|&i| b[i..i + 4] == 0x0605_4b50u32.to_le_bytes())
        .ok_or("not an NPZ (ZIP) file: no end-of-archive record")?;
    let count = usize::from(u16_at(b, eocd + 10)?);
    let mut at = u32_at(b, eocd + 16)? as usize;
    if count == 0xFFFF || at == 0xFFFF_FFFF {
        return Err(
            "ZIP64 archives with more than 65535 members or 4 GiB are not supported".into(),
        );
    }
    let mut entries = Vec::with_capacity(count);
    for _ in 0..count {
        if u32_at(b, at)? != 0x0201_4b50 {
            return Err(format!(
                "damaged NPZ: no central directory entry at byte {at}"
            ));
        }
        let name_len = usize::from(u16_at(b, at + 28)?);
        let extra_len = usize::from(u16_at(b, at + 30)?);
        let comment_len = usize::from(u16_at(b, at + 32)?);
        let name_bytes = b
            .get(at + 46..at + 46 + name_len)
            .ok_or("NPZ truncated in a member name")?;
        let size32 = u32_at(b, at + 24)?;
        let comp32 = u32_at(b, at + 20)?;
        let off32 = u32_at(b, at + 42)?;
        let mut e = Entry {
            name: String::from_utf8_lossy(name_bytes).into_owned(),
            method: u16_at(b, at + 10)?,
            crc: u32_at(b, at + 16)?,
            size: u64::from(size32),
            offset: u64::from(off32),
        };
        let extra = b
            .get(at + 46 + name_len..at + 46 + name_len + extra_len)
            .ok_or("NPZ truncated in an extra field")?;
        let full = (size32 == u32::MAX, comp32 == u32::MAX, off32 == u32::MAX);
        zip64_fix(extra, &mut e, full)?;
        entries.push(e);
        at += 46 + name_len + extra_len + comment_len;
    }
    Ok(entries)
}

/// Read every member of an NPZ archive as `(name without .npy, array)`, in archive order.
///
/// # Errors
/// A message naming the member for compressed members (save with `np.savez`), checksum
/// mismatches and malformed NPY data.
pub fn read_npz(b: &[u8]) -> Result<Vec<(String, NpyArray)>, String> {
    let mut out = Vec::new();
    for e in central_directory(b)? {
        if e.method != 0 {
            return Err(format!(
                "NPZ member `{}` is compressed (method {}); save the data with np.savez, not np.savez_compressed",
                e.name, e.method
            ));
        }
        let at = usize::try_from(e.offset).map_err(|_| "NPZ offset out of range")?;
        if u32_at(b, at)? != 0x0403_4b50 {
            return Err(format!(
                "damaged NPZ: member `{}` has no local header",
                e.name
            ));
        }
        let start = at + 30 + usize::from(u16_at(b, at + 26)?) + usize::from(u16_at(b, at + 28)?);
        let size = usize::try_from(e.size).map_err(|_| "NPZ member size out of range")?;
        let data = b
            .get(start..start.saturating_add(size))
            .ok_or_else(|| format!("NPZ truncated in member `{}`", e.name))?;
        if crc32(data) != e.crc {
            return Err(format!(
                "NPZ member `{}` fails its CRC-32 check: the file is damaged",
                e.name
            ));
        }
        let name = e.name.strip_suffix(".npy").unwrap_or(&e.name).to_string();
        let arr = match read_npy(data) {
            Ok(a) => a,
            // A string member (pathsieve's `meta`) is text, not data: read_npz_text reads it.
            Err(NpyError::UnsupportedDtype { descr }) if descr.starts_with("<U") => continue,
            Err(err) => return Err(format!("NPZ member `{}`: {err}", e.name)),
        };
        out.push((name, arr));
    }
    Ok(out)
}

/// The text of the string member `name` (a `<U` scalar as [`super::npy::npy_text`] writes
/// it), if the archive has one: the metadata of a pathsieve NPZ.
///
/// # Errors
/// A message for a damaged archive or a member `name` that is not a string scalar.
pub fn read_npz_text(b: &[u8], name: &str) -> Result<Option<String>, String> {
    let want = format!("{name}.npy");
    let Some(e) = central_directory(b)?.into_iter().find(|e| e.name == want) else {
        return Ok(None);
    };
    let at = usize::try_from(e.offset).map_err(|_| "NPZ offset out of range")?;
    let start = at + 30 + usize::from(u16_at(b, at + 26)?) + usize::from(u16_at(b, at + 28)?);
    let size = usize::try_from(e.size).map_err(|_| "NPZ member size out of range")?;
    let data = b
        .get(start..start.saturating_add(size))
        .ok_or_else(|| format!("NPZ truncated in member `{}`", e.name))?;
    if e.method != 0 || crc32(data) != e.crc {
        return Err(format!("NPZ member `{want}` is compressed or damaged"));
    }
    let not_text = || format!("NPZ member `{want}` is not a string scalar");
    if data.len() < 10 || data[6] != 1 {
        return Err(not_text());
    }
    let hlen = usize::from(u16::from_le_bytes([data[8], data[9]]));
    let header = data.get(10..10 + hlen).ok_or_else(not_text)?;
    let header = String::from_utf8_lossy(header);
    if !header.contains("'descr': '<U") || !header.contains("'shape': ()") {
        return Err(not_text());
    }
    let body = &data[10 + hlen..];
    let text: Option<String> = body
        .chunks_exact(4)
        .map(|c| u32::from_le_bytes([c[0], c[1], c[2], c[3]]))
        .take_while(|&u| u != 0)
        .map(char::from_u32)
        .collect();
    text.map(Some).ok_or_else(not_text)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::export::npy::{npy_f64, NpyData};

    // CRC-32 check value of "123456789" is 0xCBF43926 (R. Williams, "A Painless Guide to CRC
    // Error Detection Algorithms", 1993, the CRC-32 parameter set (memory)).
    #[test]
    fn crc32_matches_the_standard_check_value() {
        assert_eq!(crc32(b"123456789"), 0xCBF4_3926);
    }

    #[test]
    fn written_archives_read_back_with_names_and_values() {
        let a = npy_f64(&[2], &[1.5, -2.0]).unwrap();
        let b = npy_f64(&[1, 1], &[7.0]).unwrap();
        let z = write_npz(&[("a".into(), a), ("b b".into(), b)]).unwrap();
        let back = read_npz(&z).unwrap();
        assert_eq!(back.len(), 2);
        assert_eq!(back[0].0, "a");
        assert_eq!(back[0].1.data, NpyData::F64(vec![1.5, -2.0]));
        assert_eq!(back[1].0, "b b");
        assert_eq!(back[1].1.shape, vec![1, 1]);
    }

    #[test]
    fn a_text_member_is_skipped_by_read_npz_and_read_by_read_npz_text() {
        let a = npy_f64(&[2], &[1.5, -2.0]).unwrap();
        let t = crate::export::npy::npy_text("{\"k\": \"\u{3c6}\"}").unwrap();
        let z = write_npz(&[("a".into(), a), ("meta".into(), t)]).unwrap();
        let back = read_npz(&z).unwrap();
        assert_eq!(back.len(), 1);
        assert_eq!(
            read_npz_text(&z, "meta").unwrap().as_deref(),
            Some("{\"k\": \"\u{3c6}\"}")
        );
        assert_eq!(read_npz_text(&z, "other").unwrap(), None);
        assert!(read_npz_text(&z, "a").is_err());
    }

    #[test]
    fn damaged_archives_are_refused_not_panicked_on() {
        let a = npy_f64(&[2], &[1.5, -2.0]).unwrap();
        let z = write_npz(&[("a".into(), a)]).unwrap();
        for cut in 0..z.len() {
            let _ = read_npz(&z[..cut]);
        }
        let mut flipped = z.clone();
        flipped[40] ^= 0xFF;
        assert!(read_npz(&flipped).unwrap_err().contains("CRC-32"));
        assert!(read_npz(b"PK not really").is_err());
    }
}
