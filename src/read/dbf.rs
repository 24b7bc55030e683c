//! dBASE tables (.dbf), the attribute part of a shapefile.
//!
//! Layout (dBASE III PLUS table file structure, as referenced by the ESRI
//! Shapefile Technical Description, July 1998, "dBASE File"): a 32-byte
//! header (byte 0 version, bytes 4-7 the number of records and bytes 8-9
//! the header length and 10-11 the record length, little endian; byte 29
//! the language driver id), then one 32-byte descriptor per field (bytes
//! 0-10 the name, NUL padded; 11 the type letter; 16 the length; 17 the
//! decimal count), ended by 0x0D; then fixed-length records, each a
//! deletion flag (' ' or '*') and the fields' text in order.
//!
//! Field types and what ambit makes of them:
//!
//! | type | dBASE meaning | value |
//! | --- | --- | --- |
//! | C | character | TEXT, blanks around it removed (leading zeros kept) |
//! | N | numeric, decimal text | INTEGER when it has no decimals, else REAL; blank: NULL |
//! | F | floating, decimal text | REAL; blank: NULL |
//! | D | date, YYYYMMDD | TEXT 'YYYY-MM-DD' (ISO 8601); blank: NULL |
//! | L | logical, T/t/Y/y or F/f/N/n | true / false (1 / 0 in SQL); '?' or blank: NULL |
//!
//! Other types (memo, binary) are refused with the field's name.
//!
//! Text is decoded with, in order: the option `encoding`, the .cpg file,
//! the language driver id of byte 29, else UTF-8 (bytes that are not
//! UTF-8 are then read as Windows-1252).

use encoding_rs::Encoding;
use serde_json::{Map, Number, Value};

use super::{Problem, ReadError};

/// One field descriptor.
#[derive(Clone, Debug)]
pub struct Field {
    pub name: String,
    pub kind: u8,
    offset: usize,
    len: usize,
    decimals: u8,
}

/// How text bytes become Unicode.
#[derive(Clone, Copy, Debug)]
pub enum Codec {
    /// A declared encoding.
    Declared(&'static Encoding),
    /// Nothing declared: UTF-8, else Windows-1252.
    Undeclared,
    /// A declared code page encoding_rs does not carry (DOS code pages
    /// 437, 850 and kin): ASCII text reads, other bytes are a problem.
    AsciiOnly(u16),
}

impl Codec {
    fn decode(self, bytes: &[u8], field: &str) -> Result<String, Problem> {
        match self {
            Codec::Declared(enc) => Ok(enc.decode_without_bom_handling(bytes).0.into_owned()),
            Codec::Undeclared => match std::str::from_utf8(bytes) {
                Ok(s) => Ok(s.to_string()),
                Err(_) => Ok(encoding_rs::WINDOWS_1252
                    .decode_without_bom_handling(bytes)
                    .0
                    .into_owned()),
            },
            Codec::AsciiOnly(page) => {
                if bytes.is_ascii() {
                    Ok(String::from_utf8_lossy(bytes).into_owned())
                } else {
                    Err(Problem::Attribute {
                        field: field.to_string(),
                        message: format!("the text uses code page {page}, which ambit cannot decode; give the encoding with the option encoding (for example \"windows-1252\")"),
                    })
                }
            }
        }
    }
}

/// The code page a .cpg file names (its text, e.g. "UTF-8", "1252",
/// "88591", "ISO-8859-1").
pub fn codec_of_cpg(text: &str) -> Option<Codec> {
    let t = text.trim().trim_start_matches('\u{feff}').trim();
    let upper = t.to_ascii_uppercase();
    if let Some(n) = upper.strip_prefix("8859") {
        return Encoding::for_label(format!("iso-8859-{n}").as_bytes()).map(Codec::Declared);
    }
    let digits = upper
        .trim_start_matches("CP")
        .trim_start_matches("ANSI ")
        .trim_start_matches("OEM ");
    if let Ok(page) = digits.trim().parse::<u16>() {
        return codec_of_page(page);
    }
    Encoding::for_label(t.as_bytes()).map(Codec::Declared)
}

/// A Windows/DOS code page number as a codec.
fn codec_of_page(page: u16) -> Option<Codec> {
    let label = match page {
        65001 => "utf-8",
        866 => "ibm866",
        874 => "windows-874",
        932 => "shift_jis",
        936 => "gbk",
        949 => "euc-kr",
        950 => "big5",
        1250..=1258 => {
            return Encoding::for_label(format!("windows-{page}").as_bytes()).map(Codec::Declared)
        }
        437 | 737 | 775 | 850 | 852 | 855 | 857 | 860 | 861 | 862 | 863 | 864 | 865 | 869 => {
            return Some(Codec::AsciiOnly(page))
        }
        _ => return None,
    };
    Encoding::for_label(label.as_bytes()).map(Codec::Declared)
}

/// The code page of a dBASE language driver id (header byte 29), from the
/// table of ids in the dBASE / Visual FoxPro documentation as commonly
/// reproduced (from memory; only the ids seen in shapefiles).
pub fn codec_of_driver(id: u8) -> Option<Codec> {
    let page = match id {
        0x00 => return None,
        0x01 => 437,
        0x02 => 850,
        0x03 | 0x57 | 0x58 | 0x59 => 1252,
        0x64 => 852,
        0x65 => 866,
        0x66 => 865,
        0x67 => 861,
        0x7C => 874,
        0x7D => 1255,
        0x7E => 1256,
        0x13 | 0x7B => 932,
        0x4D | 0x7A => 936,
        0x4E | 0x79 => 949,
        0x4F | 0x78 => 950,
        0xC8 => 1250,
        0xC9 => 1251,
        0xCA => 1254,
        0xCB => 1253,
        _ => return None,
    };
    codec_of_page(page)
}

/// A dBASE table held in memory.
pub struct Table {
    bytes: Vec<u8>,
    pub fields: Vec<Field>,
    pub records: usize,
    header_len: usize,
    record_len: usize,
    codec: Codec,
}

fn u16_le(b: &[u8], at: usize) -> usize {
    u16::from_le_bytes([b[at], b[at + 1]]) as usize
}

impl Table {
    /// Reads the header and field descriptors of `bytes` (the .dbf named
    /// `file`); `codec` decodes its text, `None` for the language driver
    /// id or UTF-8.
    pub fn open(bytes: Vec<u8>, codec: Option<Codec>, file: &str) -> Result<Table, ReadError> {
        let corrupt = |message: String| ReadError::Corrupt {
            file: file.to_string(),
            message,
        };
        if bytes.len() < 33 {
            return Err(corrupt(format!(
                "the .dbf has {} bytes, fewer than a dBASE header needs (33)",
                bytes.len()
            )));
        }
        let records = u32::from_le_bytes([bytes[4], bytes[5], bytes[6], bytes[7]]) as usize;
        let header_len = u16_le(&bytes, 8);
        let record_len = u16_le(&bytes, 10);
        if header_len < 33 || header_len > bytes.len() {
            return Err(corrupt(format!(
                "the .dbf header length {header_len} is impossible for a file of {} bytes",
                bytes.len()
            )));
        }
        let codec = codec
            .or_else(|| codec_of_driver(bytes[29]))
            .unwrap_or(Codec::Undeclared);
        let mut fields = Vec::new();
        let mut offset = 1;
        let mut at = 32;
        while at + 32 <= header_len && bytes[at] != 0x0D {
            let d = &bytes[at..at + 32];
            let name_end = d[..11].iter().position(|&b| b == 0).unwrap_or(11);
            let name = codec
                .decode(&d[..name_end], "")
                .unwrap_or_else(|_| String::from_utf8_lossy(&d[..name_end]).into_owned())
                .trim()
                .to_string();
            let len = d[16] as usize;
            fields.push(Field {
                name,
                kind: d[11],
                offset,
                len,
                decimals: d[17],
            });
            offset += len;
            at += 32;
        }
        if offset != record_len {
            return Err(corrupt(format!(
                "the .dbf fields add up to {offset} bytes per record but its header says {record_len}"
            )));
        }
        let need = records
            .checked_mul(record_len)
            .and_then(|n| n.checked_add(header_len));
        if need.is_none_or(|n| n > bytes.len()) {
            return Err(corrupt(format!(
                "the .dbf announces {records} records of {record_len} bytes but holds only {} bytes after its header (truncated?)",
                bytes.len() - header_len
            )));
        }
        for f in &fields {
            if !matches!(f.kind, b'C' | b'N' | b'F' | b'D' | b'L') {
                return Err(corrupt(format!(
                    "the .dbf field {} has type {:?}, which ambit does not read (it reads C, N, F, D and L)",
                    f.name, f.kind as char
                )));
            }
        }
        Ok(Table {
            bytes,
            fields,
            records,
            header_len,
            record_len,
            codec,
        })
    }

    /// Record `k` (from 0) as attributes, and whether it is marked deleted.
    pub fn record(&self, k: usize) -> Result<(Map<String, Value>, bool), Problem> {
        let start = self.header_len + k * self.record_len;
        let rec = &self.bytes[start..start + self.record_len];
        let deleted = rec[0] == b'*';
        let mut map = Map::new();
        for f in &self.fields {
            let raw = &rec[f.offset..f.offset + f.len];
            map.insert(f.name.clone(), self.value(f, raw)?);
        }
        Ok((map, deleted))
    }

    fn value(&self, f: &Field, raw: &[u8]) -> Result<Value, Problem> {
        let bad = |message: String| Problem::Attribute {
            field: f.name.clone(),
            message,
        };
        let trimmed = |raw: &[u8]| -> String {
            String::from_utf8_lossy(raw)
                .trim_matches(|c: char| c == ' ' || c == '\0')
                .to_string()
        };
        Ok(match f.kind {
            b'C' => {
                let kept = |b: &u8| *b != b' ' && *b != 0;
                let end = raw.iter().rposition(kept).map_or(0, |p| p + 1);
                let start = raw[..end].iter().position(kept).unwrap_or(end);
                Value::String(self.codec.decode(&raw[start..end], &f.name)?)
            }
            b'N' | b'F' => {
                let t = trimmed(raw);
                if t.is_empty() || t.bytes().all(|b| b == b'*') || t == "." {
                    Value::Null
                } else if f.kind == b'N' && f.decimals == 0 && !t.contains(['.', 'e', 'E']) {
                    match t.parse::<i64>() {
                        Ok(i) => Value::Number(i.into()),
                        Err(_) => real(&t).ok_or_else(|| bad(format!("{t:?} is not a number")))?,
                    }
                } else {
                    real(&t).ok_or_else(|| bad(format!("{t:?} is not a number")))?
                }
            }
            b'D' => {
                let t = trimmed(raw);
                if t.is_empty() || t.bytes().all(|b| b == b'0') {
                    Value::Null
                } else if t.len() == 8 && t.bytes().all(|b| b.is_ascii_digit()) {
                    Value::String(format!("{}-{}-{}", &t[..4], &t[4..6], &t[6..]))
                } else {
                    return Err(bad(format!("{t:?} is not a date (YYYYMMDD)")));
                }
            }
            _ => match raw.first().copied().unwrap_or(b' ') {
                b'T' | b't' | b'Y' | b'y' => Value::Bool(true),
                b'F' | b'f' | b'N' | b'n' => Value::Bool(false),
                b'?' | b' ' | 0 => Value::Null,
                other => return Err(bad(format!("{:?} is not a logical value", other as char))),
            },
        })
    }
}

/// A finite decimal number as a JSON number.
fn real(t: &str) -> Option<Value> {
    t.parse::<f64>()
        .ok()
        .and_then(Number::from_f64)
        .map(Value::Number)
}
