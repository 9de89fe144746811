//! Metadata carried across a conversion: the chunks of the input other than 'fmt ' and
//! 'data', with every sample position in them rescaled from the input rate to the output
//! rate.
//!
//! **Rescaling.** A position `p` counted at the input rate `fs` becomes the nearest integer
//! to `p x R / fs` at the output rate `R`, computed exactly in 128-bit integers:
//! `(2 p R + fs) / (2 fs)`, rounded down, i.e. halves rounded up (positions are never
//! negative, so this is also "half away from zero"). Under a clock correction
//! (`--clock-ppm P`) the input's true rate `fs x (1 + P x 1e-6)` takes the place of `fs`,
//! still exactly (every position, the 'bext' time reference included, is counted in
//! samples of the input's own clock). A value that no longer fits its field
//! (a 32-bit position past 2^32 after upsampling) drops the chunk, named in the report.
//!
//! What is done with each chunk (layouts as the specifications give them, offsets in bytes;
//! from memory where marked):
//!
//! - 'bext' (EBU Tech 3285, BWF): TimeReferenceLow/High (u32 at 338 and 342: samples since
//!   midnight at the file's rate) rescaled; every other byte of the fixed 602-byte part kept
//!   (Description, Originator, OriginatorReference, OriginationDate/Time, Version, UMID,
//!   loudness, reserved); CodingHistory (from 602) keeps its lines and gets one more, in
//!   EBU R 98 syntax (from memory: comma-separated `A=` algorithm, `F=` sampling frequency
//!   in Hz, `W=` word length, `M=` mode (mono, stereo, dual-mono, joint-stereo; no value
//!   for more channels, so `M=` is left out then), `T=` free text; each line ends CR LF).
//! - 'cue ' (IBM/Microsoft RIFF MCI specification, 1991): dwCount, then points of
//!   dwIdentifier, dwPosition, fccChunk, dwChunkStart, dwBlockStart, dwSampleOffset
//!   (u32 each): dwPosition and dwSampleOffset rescaled; a non-zero dwBlockStart (a byte
//!   offset into the data) moved to the byte offset of its rescaled frame.
//! - 'LIST' 'adtl' (same specification): 'labl' and 'note' kept; 'ltxt' dwSampleLength (u32
//!   at 4) rescaled as the length of a region from its cue point: `rescale(start + length)
//!   - rescale(start)`, so the region's end lands where the rescaled end is (without a cue
//!   point of the same id: `rescale(length)`).
//! - 'smpl' (same specification): dwSamplePeriod (u32 at 8, nanoseconds per sample) set to
//!   the nearest integer to 1e9 / R; each loop's dwStart rescaled, and its dwEnd (the last
//!   sample played, inclusive; from memory) moved so that the end boundary `dwEnd + 1` is
//!   rescaled.
//! - 'iXML' (iXML specification, from memory): `<FILE_SAMPLE_RATE>` and
//!   `<TIMESTAMP_SAMPLE_RATE>` set to R, `<TIMESTAMP_SAMPLES_SINCE_MIDNIGHT_HI>`/`_LO>`
//!   rescaled from the timestamp's rate (the file's, when not given) to R, and
//!   `<AUDIO_BIT_DEPTH>` set to the output word length; the rest kept byte for byte.
//! - 'LIST' 'INFO' and 'axml' (EBU Tech 3285 supplement 5): kept byte for byte.
//! - Padding ('JUNK', 'junk', 'PAD ', 'FLLR') is not metadata and is not copied; 'fact'
//!   (a frame count, restated by the output's data size) is dropped and named.
//! - Anything else is unknown: it may hold positions that cannot be rescaled, so it is
//!   dropped and named, unless [`MetadataPolicy::KeepUnknown`] copies it verbatim.

use crate::clock::ClockPpm;
use std::collections::HashMap;

/// Largest metadata chunk read, bytes: larger known chunks are a [`super::WavError`];
/// larger unknown ones are skipped unread and named.
pub const MAX_CHUNK_BYTES: u32 = 16 << 20;
/// Most bytes of metadata read from one file.
pub const MAX_TOTAL_BYTES: u64 = 64 << 20;

/// One RIFF chunk: its id and body (without the pad byte).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Chunk {
    /// Four-character code.
    pub id: [u8; 4],
    /// The body, as many bytes as the size field says.
    pub body: Vec<u8>,
}

/// A chunk as found in the input.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Found {
    /// Read whole.
    Read(Chunk),
    /// An unknown chunk over [`MAX_CHUNK_BYTES`], skipped unread.
    TooLarge {
        /// Its id.
        id: [u8; 4],
        /// Its declared size.
        len: u64,
    },
}

/// What to do with the input's metadata.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum MetadataPolicy {
    /// Carry known chunks (positions rescaled); drop unknown ones, naming them.
    #[default]
    Carry,
    /// Carry known chunks, and copy unknown ones verbatim.
    KeepUnknown,
    /// Write the format and the audio only.
    Strip,
}

/// The conversion the metadata follows.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Retiming {
    /// Input rate, Hz (not 0).
    pub in_rate: u32,
    /// Output rate, Hz (not 0).
    pub out_rate: u32,
    /// Bytes per input frame.
    pub in_block_align: u16,
    /// Bytes per output frame.
    pub out_block_align: u16,
    /// Output word length, bits.
    pub out_bits: u16,
    /// The CodingHistory line appended to 'bext', without its CR LF.
    pub coding_history: String,
    /// Clock correction of the input (`--clock-ppm`): positions move by
    /// `out_rate / (in_rate x (1 + ppm x 1e-6))`, the true ratio; zero for none.
    pub clock: ClockPpm,
}

impl Retiming {
    /// A position of the input (at `from` Hz on the input's clock) moved to the output's
    /// rate: [`rescale`] by the rates, or by the true ratio under a clock correction.
    fn moved(&self, pos: u64, from: u32) -> u128 {
        if self.clock.is_zero() {
            rescale(pos, from, self.out_rate)
        } else {
            self.clock.rescale(pos, from, self.out_rate)
        }
    }

    /// A position at the input rate moved to the output's rate.
    fn position(&self, pos: u64) -> u128 {
        self.moved(pos, self.in_rate)
    }
}

/// What became of the input's metadata.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct MetadataSummary {
    /// Chunks written to the output (ids, 'LIST' ones with their list type).
    pub carried: Vec<String>,
    /// Positions and fields changed for the new rate, in words.
    pub rescaled: Vec<String>,
    /// Chunks not written, each with the reason.
    pub dropped: Vec<String>,
}

impl MetadataSummary {
    /// Add `other`'s entries after this one's.
    pub fn extend(&mut self, other: MetadataSummary) {
        self.carried.extend(other.carried);
        self.rescaled.extend(other.rescaled);
        self.dropped.extend(other.dropped);
    }

    /// Whether there is nothing to say.
    pub fn is_empty(&self) -> bool {
        self.carried.is_empty() && self.rescaled.is_empty() && self.dropped.is_empty()
    }
}

/// The nearest integer to `pos x to / from`, halves rounded up, exactly (see the module
/// documentation). `from` must not be 0 (0 is returned then).
pub fn rescale(pos: u64, from: u32, to: u32) -> u128 {
    if from == 0 {
        return 0;
    }
    (2 * u128::from(pos) * u128::from(to) + u128::from(from)) / (2 * u128::from(from))
}

/// The nearest integer number of nanoseconds per sample at `rate` (halves up).
pub fn sample_period_ns(rate: u32) -> u32 {
    if rate == 0 {
        return 0;
    }
    // At most 1e9 (rate 1): fits.
    ((2_000_000_000u64 + u64::from(rate)) / (2 * u64::from(rate))) as u32
}

/// A chunk id for people: trailing spaces trimmed, other bytes escaped.
pub fn id_text(id: &[u8; 4]) -> String {
    String::from_utf8_lossy(id)
        .trim_end_matches(' ')
        .escape_debug()
        .to_string()
}

/// Padding chunks: not metadata, never copied.
fn is_padding(id: &[u8; 4]) -> bool {
    matches!(id, b"JUNK" | b"junk" | b"PAD " | b"FLLR")
}

/// Whether rerate knows what is in a chunk of this id (so reads it whatever its size, up to
/// [`MAX_CHUNK_BYTES`]).
pub fn is_known(id: &[u8; 4]) -> bool {
    matches!(
        id,
        b"bext" | b"cue " | b"LIST" | b"smpl" | b"iXML" | b"axml" | b"fact"
    ) || is_padding(id)
}

/// The chunks to write for `found` (chunks of the input, in their order), and what was done.
/// `cues` holds the input positions of cue points seen so far (by identifier), for 'ltxt'
/// lengths; cue points found here are added to it.
pub fn carry(
    found: &[Found],
    policy: MetadataPolicy,
    t: &Retiming,
    cues: &mut HashMap<u32, u64>,
) -> (Vec<Chunk>, MetadataSummary) {
    let mut out = Vec::new();
    let mut s = MetadataSummary::default();
    // Cue points first, wherever they are among these chunks, for the 'ltxt' lengths.
    for f in found {
        if let Found::Read(c) = f {
            if &c.id == b"cue " {
                cue_positions(&c.body, cues);
            }
        }
    }
    for f in found {
        let c = match f {
            Found::TooLarge { id, len } => {
                if !is_padding(id) {
                    s.dropped.push(format!(
                        "{} ({len} bytes, over the {} MiB rerate copies)",
                        id_text(id),
                        MAX_CHUNK_BYTES >> 20
                    ));
                }
                continue;
            }
            Found::Read(c) => c,
        };
        if is_padding(&c.id) {
            continue;
        }
        let name = chunk_name(c);
        if policy == MetadataPolicy::Strip {
            s.dropped.push(format!("{name} (--strip-metadata)"));
            continue;
        }
        let done: Result<(Vec<u8>, Option<String>), String> = match (&c.id, list_type(c)) {
            (b"bext", _) => bext(&c.body, t).map(|(b, r)| (b, Some(r))),
            (b"cue ", _) => cue(&c.body, t).map(|(b, r)| (b, Some(r))),
            (b"smpl", _) => smpl(&c.body, t).map(|(b, r)| (b, Some(r))),
            (b"iXML", _) => Ok(ixml(&c.body, t)),
            (b"axml", _) | (b"LIST", Some(b"INFO")) => Ok((c.body.clone(), None)),
            (b"LIST", Some(b"adtl")) => adtl(&c.body, t, cues),
            (b"fact", _) => Err("a frame count, restated by the output's data size".into()),
            _ if policy == MetadataPolicy::KeepUnknown => Ok((c.body.clone(), None)),
            _ => Err("unknown; --keep-unknown-chunks copies it".into()),
        };
        match done {
            Ok((body, rescaled)) => {
                s.carried.push(name);
                s.rescaled.extend(rescaled);
                out.push(Chunk { id: c.id, body });
            }
            Err(why) => s.dropped.push(format!("{name} ({why})")),
        }
    }
    (out, s)
}

/// The list type of a 'LIST' chunk.
fn list_type(c: &Chunk) -> Option<&[u8]> {
    (&c.id == b"LIST").then(|| c.body.get(..4)).flatten()
}

/// "LIST-INFO" for a list, the trimmed id otherwise.
fn chunk_name(c: &Chunk) -> String {
    match list_type(c) {
        Some(t) => {
            let mut id = [b' '; 4];
            id.copy_from_slice(t);
            format!("LIST-{}", id_text(&id))
        }
        None => id_text(&c.id),
    }
}

/// "1 loop", "2 loops".
fn plural(n: usize, what: &str) -> String {
    format!("{n} {what}{}", if n == 1 { "" } else { "s" })
}

fn u32_at(b: &[u8], i: usize) -> Option<u32> {
    b.get(i..i + 4)
        .map(|s| u32::from_le_bytes([s[0], s[1], s[2], s[3]]))
}

fn put_u32(b: &mut [u8], i: usize, v: u32) {
    b[i..i + 4].copy_from_slice(&v.to_le_bytes());
}

/// `rescale` into a 32-bit field, or the reason the chunk is dropped.
fn rescale_u32(pos: u64, t: &Retiming, what: &str) -> Result<u32, String> {
    u32::try_from(t.position(pos)).map_err(|_| format!("{what} {pos} rescaled is past 32 bits"))
}

/// Bytes of the fixed part of 'bext', before CodingHistory (EBU Tech 3285).
const BEXT_FIXED: usize = 602;

fn bext(body: &[u8], t: &Retiming) -> Result<(Vec<u8>, String), String> {
    if body.len() < BEXT_FIXED {
        return Err(format!(
            "{} bytes, shorter than the {BEXT_FIXED} of its fixed part",
            body.len()
        ));
    }
    let lo = u32_at(body, 338).unwrap_or(0);
    let hi = u32_at(body, 342).unwrap_or(0);
    let tr = u64::from(lo) | (u64::from(hi) << 32);
    let new = u64::try_from(t.position(tr))
        .map_err(|_| format!("time reference {tr} rescaled is past 64 bits"))?;
    let mut out = body[..BEXT_FIXED].to_vec();
    put_u32(&mut out, 338, new as u32);
    put_u32(&mut out, 342, (new >> 32) as u32);
    // CodingHistory: its text as it is (without the NULs that may end it), then our line.
    let mut history = &body[BEXT_FIXED..];
    while let [rest @ .., 0] = history {
        history = rest;
    }
    out.extend_from_slice(history);
    if !history.is_empty() && !history.ends_with(b"\r\n") {
        out.extend_from_slice(b"\r\n");
    }
    out.extend_from_slice(t.coding_history.as_bytes());
    out.extend_from_slice(b"\r\n");
    Ok((
        out,
        format!("bext time reference {tr} -> {new}, coding history line added"),
    ))
}

/// Bytes of one cue point.
const CUE_POINT: usize = 24;

/// The points of a 'cue ' body, if it holds as many as it says.
fn cue_points(body: &[u8]) -> Option<usize> {
    let n = usize::try_from(u32_at(body, 0)?).ok()?;
    (n.checked_mul(CUE_POINT)?.checked_add(4)? <= body.len()).then_some(n)
}

/// Record each cue point's dwPosition by identifier.
fn cue_positions(body: &[u8], cues: &mut HashMap<u32, u64>) {
    if let Some(n) = cue_points(body) {
        for k in 0..n {
            let p = 4 + k * CUE_POINT;
            if let (Some(id), Some(pos)) = (u32_at(body, p), u32_at(body, p + 4)) {
                cues.insert(id, u64::from(pos));
            }
        }
    }
}

fn cue(body: &[u8], t: &Retiming) -> Result<(Vec<u8>, String), String> {
    let n = cue_points(body).ok_or("fewer bytes than its count of cue points needs")?;
    let mut out = body.to_vec();
    let (ia, oa) = (u64::from(t.in_block_align), u64::from(t.out_block_align));
    for k in 0..n {
        let p = 4 + k * CUE_POINT;
        let pos = u32_at(body, p + 4).unwrap_or(0);
        put_u32(&mut out, p + 4, rescale_u32(pos.into(), t, "cue position")?);
        let block = u32_at(body, p + 16).unwrap_or(0);
        if block != 0 && ia > 0 {
            let frames = t.position(u64::from(block) / ia);
            let bytes = u32::try_from(frames * u128::from(oa))
                .map_err(|_| format!("cue block start {block} rescaled is past 32 bits"))?;
            put_u32(&mut out, p + 16, bytes);
        }
        let off = u32_at(body, p + 20).unwrap_or(0);
        put_u32(
            &mut out,
            p + 20,
            rescale_u32(off.into(), t, "cue sample offset")?,
        );
    }
    Ok((out, plural(n, "cue point")))
}

/// Bytes of the 'ltxt' fields before its text.
const LTXT_FIXED: usize = 20;

fn adtl(
    body: &[u8],
    t: &Retiming,
    cues: &HashMap<u32, u64>,
) -> Result<(Vec<u8>, Option<String>), String> {
    let mut out = body[..4].to_vec();
    let mut pos = 4;
    let mut lengths = 0;
    while pos < body.len() {
        let head = body
            .get(pos..pos + 8)
            .ok_or("a sub-chunk header cut short")?;
        let id = [head[0], head[1], head[2], head[3]];
        let len = u32_at(head, 4).unwrap_or(0) as usize;
        let sub = body
            .get(pos + 8..pos + 8 + len)
            .ok_or_else(|| format!("its '{}' sub-chunk runs past its end", id_text(&id)))?;
        let mut sub = sub.to_vec();
        if &id == b"ltxt" && len >= LTXT_FIXED {
            let cue = u32_at(&sub, 0).unwrap_or(0);
            let length = u64::from(u32_at(&sub, 4).unwrap_or(0));
            let new = match cues.get(&cue) {
                Some(&start) => t.position(start + length) - t.position(start),
                None => t.position(length),
            };
            let new = u32::try_from(new)
                .map_err(|_| format!("ltxt length {length} rescaled is past 32 bits"))?;
            put_u32(&mut sub, 4, new);
            lengths += 1;
        }
        out.extend_from_slice(&id);
        out.extend_from_slice(&(len as u32).to_le_bytes());
        out.extend_from_slice(&sub);
        if len % 2 == 1 {
            out.push(0);
        }
        pos += 8 + len + len % 2;
    }
    Ok((
        out,
        (lengths > 0).then(|| format!("{lengths} ltxt lengths")),
    ))
}

/// Bytes of the 'smpl' fields before its loops.
const SMPL_FIXED: usize = 36;
/// Bytes of one loop.
const SMPL_LOOP: usize = 24;

fn smpl(body: &[u8], t: &Retiming) -> Result<(Vec<u8>, String), String> {
    let n = u32_at(body, 28)
        .and_then(|n| usize::try_from(n).ok())
        .filter(|&n| {
            n.checked_mul(SMPL_LOOP)
                .and_then(|b| b.checked_add(SMPL_FIXED))
                .is_some_and(|need| need <= body.len())
        })
        .ok_or("fewer bytes than its count of loops needs")?;
    let mut out = body.to_vec();
    put_u32(&mut out, 8, sample_period_ns(t.out_rate));
    for k in 0..n {
        let p = SMPL_FIXED + k * SMPL_LOOP;
        let start = u32_at(body, p + 8).unwrap_or(0);
        let end = u32_at(body, p + 12).unwrap_or(0);
        put_u32(&mut out, p + 8, rescale_u32(start.into(), t, "loop start")?);
        // The end is inclusive: its boundary, end + 1, is what is rescaled.
        let end_new = rescale_u32(u64::from(end) + 1, t, "loop end")?.saturating_sub(1);
        put_u32(&mut out, p + 12, end_new);
    }
    Ok((
        out,
        format!(
            "smpl sample period {} ns, {}",
            sample_period_ns(t.out_rate),
            plural(n, "loop")
        ),
    ))
}

/// The integer between `<TAG>` and `</TAG>` (first occurrence; spaces allowed around it),
/// with the byte range of the text between the tags.
fn xml_int(xml: &[u8], tag: &str) -> Option<(u64, std::ops::Range<usize>)> {
    let open = format!("<{tag}>");
    let close = format!("</{tag}>");
    let a = find(xml, open.as_bytes())? + open.len();
    let b = a + find(&xml[a..], close.as_bytes())?;
    let text = std::str::from_utf8(&xml[a..b]).ok()?;
    Some((text.trim().parse().ok()?, a..b))
}

fn find(hay: &[u8], needle: &[u8]) -> Option<usize> {
    hay.windows(needle.len()).position(|w| w == needle)
}

fn ixml(body: &[u8], t: &Retiming) -> (Vec<u8>, Option<String>) {
    let mut out = body.to_vec();
    let mut edits: Vec<(std::ops::Range<usize>, String)> = Vec::new();
    let mut what = Vec::new();
    if let Some((_, r)) = xml_int(body, "FILE_SAMPLE_RATE") {
        edits.push((r, t.out_rate.to_string()));
        what.push("FILE_SAMPLE_RATE");
    }
    if let Some((_, r)) = xml_int(body, "AUDIO_BIT_DEPTH") {
        edits.push((r, t.out_bits.to_string()));
        what.push("AUDIO_BIT_DEPTH");
    }
    let ts_rate = xml_int(body, "TIMESTAMP_SAMPLE_RATE");
    let from = ts_rate
        .as_ref()
        .and_then(|(v, _)| u32::try_from(*v).ok())
        .filter(|&v| v > 0)
        .unwrap_or(t.in_rate);
    if let Some((_, r)) = ts_rate {
        edits.push((r, t.out_rate.to_string()));
        what.push("TIMESTAMP_SAMPLE_RATE");
    }
    let hi = xml_int(body, "TIMESTAMP_SAMPLES_SINCE_MIDNIGHT_HI");
    let lo = xml_int(body, "TIMESTAMP_SAMPLES_SINCE_MIDNIGHT_LO");
    if let (Some((h, hr)), Some((l, lr))) = (hi, lo) {
        if h <= u64::from(u32::MAX) && l <= u64::from(u32::MAX) {
            let new = t.moved((h << 32) | l, from);
            if let Ok(new) = u64::try_from(new) {
                edits.push((hr, (new >> 32).to_string()));
                edits.push((lr, (new & 0xFFFF_FFFF).to_string()));
                what.push("TIMESTAMP_SAMPLES_SINCE_MIDNIGHT_HI/LO");
            }
        }
    }
    // From the last edit to the first, so earlier ranges stay where they are.
    edits.sort_by_key(|(r, _)| std::cmp::Reverse(r.start));
    for (r, text) in edits {
        out.splice(r, text.into_bytes());
    }
    let said = (!what.is_empty()).then(|| format!("iXML {}", what.join(", ")));
    (out, said)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn t(in_rate: u32, out_rate: u32) -> Retiming {
        Retiming {
            in_rate,
            out_rate,
            in_block_align: 4,
            out_block_align: 6,
            out_bits: 24,
            coding_history: "A=PCM,F=48000,W=24,M=stereo,T=test".into(),
            clock: ClockPpm::ZERO,
        }
    }

    #[test]
    fn rescaling_rounds_to_nearest_halves_up() {
        // 01:00:00 at 48 kHz is 172800000 samples, at 44.1 kHz 158760000 (CHECKS.md, bext).
        assert_eq!(rescale(172_800_000, 48_000, 44_100), 158_760_000);
        assert_eq!(rescale(158_760_000, 44_100, 48_000), 172_800_000);
        // 1 x 1/2 = 0.5 -> 1; 3 x 1/2 = 1.5 -> 2; 1 x 1/3 -> 0; 2 x 1/3 -> 1.
        assert_eq!(rescale(1, 2, 1), 1);
        assert_eq!(rescale(3, 2, 1), 2);
        assert_eq!(rescale(1, 3, 1), 0);
        assert_eq!(rescale(2, 3, 1), 1);
        // No overflow at the extremes.
        assert_eq!(
            rescale(u64::MAX, 1, 1_000_000),
            u128::from(u64::MAX) * 1_000_000
        );
        assert_eq!(sample_period_ns(48_000), 20_833);
        assert_eq!(sample_period_ns(44_100), 22_676);
        assert_eq!(sample_period_ns(3), 333_333_333);
    }

    #[test]
    fn short_or_inconsistent_chunks_are_dropped_not_trusted() {
        let found = vec![
            Found::Read(Chunk {
                id: *b"bext",
                body: vec![0; 100],
            }),
            Found::Read(Chunk {
                id: *b"cue ",
                body: [u32::MAX.to_le_bytes().as_slice(), &[0; 24]].concat(),
            }),
            Found::Read(Chunk {
                id: *b"smpl",
                body: vec![0xFF; 40],
            }),
            Found::Read(Chunk {
                id: *b"LIST",
                body: b"adtlltxt\xFF\xFF\xFF\x7F".to_vec(),
            }),
            Found::Read(Chunk {
                id: *b"abcd",
                body: vec![1, 2, 3],
            }),
            Found::TooLarge {
                id: *b"big ",
                len: 1 << 30,
            },
        ];
        let (out, s) = carry(
            &found,
            MetadataPolicy::Carry,
            &t(48_000, 44_100),
            &mut HashMap::new(),
        );
        assert!(out.is_empty(), "{out:?}");
        assert_eq!(s.dropped.len(), 6, "{s:?}");
        assert!(s.dropped[0].starts_with("bext (100 bytes"), "{s:?}");
        assert!(s.dropped[4].starts_with("abcd (unknown"), "{s:?}");
        let (out, s) = carry(
            &found[4..5],
            MetadataPolicy::KeepUnknown,
            &t(48_000, 44_100),
            &mut HashMap::new(),
        );
        assert_eq!(out.len(), 1);
        assert_eq!(s.carried, ["abcd"]);
    }

    #[test]
    fn smpl_loops_keep_their_inclusive_end() {
        let mut body = vec![0u8; 36 + 24];
        put_u32(&mut body, 28, 1);
        put_u32(&mut body, 36 + 8, 1000);
        put_u32(&mut body, 36 + 12, 1999);
        let (b, _) = smpl(&body, &t(44_100, 88_200)).unwrap();
        assert_eq!(u32_at(&b, 8), Some(11_338));
        assert_eq!(u32_at(&b, 36 + 8), Some(2000));
        // 1000 frames looped become 2000: the end is 3999, not 3998.
        assert_eq!(u32_at(&b, 36 + 12), Some(3999));
    }

    #[test]
    fn ixml_fields_are_rewritten_in_place() {
        let x = b"<BWFXML><SPEED><FILE_SAMPLE_RATE>48000</FILE_SAMPLE_RATE>\
                  <AUDIO_BIT_DEPTH>16</AUDIO_BIT_DEPTH>\
                  <TIMESTAMP_SAMPLES_SINCE_MIDNIGHT_HI>1</TIMESTAMP_SAMPLES_SINCE_MIDNIGHT_HI>\
                  <TIMESTAMP_SAMPLES_SINCE_MIDNIGHT_LO>0</TIMESTAMP_SAMPLES_SINCE_MIDNIGHT_LO>\
                  <TIMESTAMP_SAMPLE_RATE>48000</TIMESTAMP_SAMPLE_RATE></SPEED></BWFXML>";
        let (b, said) = ixml(x, &t(48_000, 96_000));
        let s = String::from_utf8(b).unwrap();
        assert!(s.contains("<FILE_SAMPLE_RATE>96000</"), "{s}");
        assert!(s.contains("<AUDIO_BIT_DEPTH>24</"), "{s}");
        assert!(s.contains("<TIMESTAMP_SAMPLE_RATE>96000</"), "{s}");
        // 2^32 doubled.
        assert!(s.contains("_HI>2</"), "{s}");
        assert!(s.contains("_LO>0</"), "{s}");
        assert!(said.unwrap().contains("FILE_SAMPLE_RATE"));
    }
}
