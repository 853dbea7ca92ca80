//! WAV input: a bounded header scan that names problems with byte offsets,
//! then hound for the samples.
//!
//! Why a scan of our own before hound: hound's errors are terse ("Unsupported")
//! and the user needs to know *which* format tag or field is wrong and where.
//! The scan reads only chunk headers (seeking over chunk bodies), so it costs
//! a few hundred bytes whatever the file size.
//!
//! Invariant: no sample data is held beyond one block of `BLOCK_FRAMES`.

use std::fs::File;
use std::io::{BufReader, Read, Seek, SeekFrom};
use std::path::Path;

use super::{AudioError, MAX_SOURCE_SAMPLE_RATE, MIN_SOURCE_SAMPLE_RATE};

/// Frames read per block.
pub(crate) const BLOCK_FRAMES: usize = 4096;

/// What the header says.
#[derive(Debug, Clone)]
pub(crate) struct WavHeader {
    /// Format tag, with WAVE_FORMAT_EXTENSIBLE resolved to its sub-format.
    pub format_tag: u16,
    pub channels: u16,
    pub sample_rate: u32,
    pub bits_per_sample: u16,
    pub block_align: u16,
    pub data_offset: u64,
    pub data_len: u64,
    pub file_len: u64,
}

/// How a WAV is to be decoded.
pub(crate) enum WavRoute {
    /// PCM integer or IEEE float: hound.
    Hound(WavHeader),
    /// µ-law or A-law: symphonia's PCM decoder handles these companded codes.
    Companded,
}

const PCM: u16 = 0x0001;
const IEEE_FLOAT: u16 = 0x0003;
const A_LAW: u16 = 0x0006;
const MU_LAW: u16 = 0x0007;
const EXTENSIBLE: u16 = 0xFFFE;

fn tag_name(tag: u16) -> &'static str {
    match tag {
        0x0002 => "Microsoft ADPCM",
        0x0011 => "IMA ADPCM",
        0x0031 => "GSM 6.10",
        0x0050 => "MPEG audio",
        0x0055 => "MP3",
        _ => "an unrecognised codec",
    }
}

/// True when the file starts like a RIFF/WAVE file.
pub(crate) fn looks_like_wav(magic: &[u8]) -> bool {
    // A file cut inside its first 12 bytes still counts, so the WAV reader
    // can say how short it is.
    magic.starts_with(b"RIFF") && (magic.len() < 12 || &magic[8..12] == b"WAVE")
}

/// Reads chunk headers up to the data chunk and decides the route.
pub(crate) fn scan(path: &Path) -> Result<WavRoute, AudioError> {
    let malformed = |message: String| AudioError::Malformed {
        file: path.to_path_buf(),
        message,
    };
    let io = |source: std::io::Error| AudioError::Io {
        file: path.to_path_buf(),
        source,
    };
    let mut f = File::open(path).map_err(io)?;
    let file_len = f.metadata().map_err(io)?.len();
    let mut riff = [0u8; 12];
    read_exact_at(&mut f, &mut riff, 0).map_err(|_| {
        malformed(format!(
            "WAV header is cut off: the file is only {file_len} bytes"
        ))
    })?;

    let mut fmt: Option<(u64, [u8; 40], u32)> = None;
    let mut offset: u64 = 12;
    // A real file has a handful of chunks; the cap keeps a hostile file from
    // making us walk millions of tiny chunks.
    for _ in 0..10_000 {
        let mut head = [0u8; 8];
        if read_exact_at(&mut f, &mut head, offset).is_err() {
            return Err(malformed(format!(
                "no data chunk: the chunk list ends at byte {offset} of {file_len}"
            )));
        }
        let id = [head[0], head[1], head[2], head[3]];
        let len = u64::from(u32::from_le_bytes([head[4], head[5], head[6], head[7]]));
        let body = offset + 8;
        match &id {
            b"fmt " => {
                if len < 16 {
                    return Err(malformed(format!(
                        "fmt chunk at byte {offset} is {len} bytes; at least 16 are needed"
                    )));
                }
                let mut buf = [0u8; 40];
                let want = len.min(40) as usize;
                read_exact_at(&mut f, &mut buf[..want], body).map_err(|_| {
                    malformed(format!(
                        "fmt chunk at byte {offset} is cut off by the end of the file"
                    ))
                })?;
                fmt = Some((offset, buf, len as u32));
            }
            b"data" => {
                let Some((fmt_offset, b, fmt_len)) = fmt else {
                    return Err(malformed(format!(
                        "data chunk at byte {offset} comes before any fmt chunk"
                    )));
                };
                let u16_at = |i: usize| u16::from_le_bytes([b[i], b[i + 1]]);
                let mut format_tag = u16_at(0);
                let channels = u16_at(2);
                let sample_rate = u32::from_le_bytes([b[4], b[5], b[6], b[7]]);
                let block_align = u16_at(12);
                let bits_per_sample = u16_at(14);
                if format_tag == EXTENSIBLE {
                    if fmt_len < 40 {
                        return Err(malformed(format!(
                            "fmt chunk at byte {fmt_offset} says WAVE_FORMAT_EXTENSIBLE but is \
                             only {fmt_len} bytes (40 needed)"
                        )));
                    }
                    // The sub-format GUID starts at byte 24 of the fmt body; its
                    // first two bytes are the ordinary format tag (Microsoft,
                    // "WAVEFORMATEXTENSIBLE", KSDATAFORMAT_SUBTYPE_* GUIDs).
                    format_tag = u16_at(24);
                }
                let header = WavHeader {
                    format_tag,
                    channels,
                    sample_rate,
                    bits_per_sample,
                    block_align,
                    data_offset: body,
                    data_len: len,
                    file_len,
                };
                return route(path, header, fmt_offset);
            }
            _ => {}
        }
        // Chunks are padded to an even length (RIFF specification).
        offset = body + len + (len & 1);
    }
    Err(malformed(
        "more than 10 000 chunks before the data chunk".into(),
    ))
}

fn route(path: &Path, h: WavHeader, fmt_offset: u64) -> Result<WavRoute, AudioError> {
    let file = path.to_path_buf();
    let channels_at = fmt_offset + 10;
    let rate_at = fmt_offset + 12;
    if h.channels == 0 {
        return Err(AudioError::Malformed {
            file,
            message: format!("header says the file has 0 channels (byte {channels_at})"),
        });
    }
    check_sample_rate(path, h.sample_rate, &format!(" (byte {rate_at})"))?;
    let valid = match h.format_tag {
        PCM => matches!(h.bits_per_sample, 8 | 16 | 24 | 32),
        IEEE_FLOAT => h.bits_per_sample == 32,
        A_LAW | MU_LAW => h.bits_per_sample == 8,
        tag => {
            return Err(AudioError::Unsupported {
                file,
                message: format!(
                    "uses WAV format tag 0x{tag:04X} ({}), which Ambit does not decode; \
                     convert it to 16-bit PCM WAV or FLAC",
                    tag_name(tag)
                ),
            });
        }
    };
    if !valid {
        let kind = if h.format_tag == IEEE_FLOAT {
            "float"
        } else {
            "integer"
        };
        return Err(AudioError::Unsupported {
            file,
            message: format!(
                "{} bits per {kind} sample is not supported (byte {}); use 8, 16, 24 or 32-bit \
                 integer or 32-bit float",
                h.bits_per_sample,
                fmt_offset + 22
            ),
        });
    }
    // Each frame holds one container-sized sample per channel (RIFF/WAVE
    // specification); anything else means a damaged header.
    let frame_bytes = u32::from(h.channels) * u32::from(h.bits_per_sample).div_ceil(8);
    if u32::from(h.block_align) != frame_bytes {
        return Err(AudioError::Malformed {
            file,
            message: format!(
                "block align {} (byte {}) does not match {} channels of {}-bit samples \
                 ({frame_bytes} bytes per frame)",
                h.block_align,
                fmt_offset + 20,
                h.channels,
                h.bits_per_sample
            ),
        });
    }
    if h.data_len == 0 || h.data_offset >= h.file_len {
        return Err(AudioError::Unusable {
            file,
            message: format!(
                "has a header but no audio data (the data chunk at byte {} is empty)",
                h.data_offset.saturating_sub(8)
            ),
        });
    }
    if matches!(h.format_tag, A_LAW | MU_LAW) {
        Ok(WavRoute::Companded)
    } else {
        Ok(WavRoute::Hound(h))
    }
}

/// Rejects rates outside what a recording of singing can sensibly have.
pub(crate) fn check_sample_rate(path: &Path, rate: u32, place: &str) -> Result<(), AudioError> {
    if rate < MIN_SOURCE_SAMPLE_RATE {
        return Err(AudioError::Unsupported {
            file: path.to_path_buf(),
            message: format!(
                "sample rate {rate} Hz{place} is below the {MIN_SOURCE_SAMPLE_RATE} Hz minimum; \
                 it cannot carry the harmonics the pitch tracker needs"
            ),
        });
    }
    if rate > MAX_SOURCE_SAMPLE_RATE {
        return Err(AudioError::Unsupported {
            file: path.to_path_buf(),
            message: format!(
                "sample rate {rate} Hz{place} is above the {MAX_SOURCE_SAMPLE_RATE} Hz maximum; \
                 the header is probably damaged"
            ),
        });
    }
    Ok(())
}

fn read_exact_at(f: &mut File, buf: &mut [u8], offset: u64) -> std::io::Result<()> {
    f.seek(SeekFrom::Start(offset))?;
    f.read_exact(buf)
}

/// How the data chunk's bytes become samples: hound's reading of the
/// header (its sample format, container bytes and valid bits) decides, and
/// the combinations are the ones hound's `Sample::read` for `i32`/`f32`
/// decodes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Encoding {
    /// 8-bit PCM: unsigned, offset 128 (RIFF/WAVE specification).
    U8,
    I16,
    /// 24 bits in 3 bytes.
    I24,
    /// 24 valid bits in a 4-byte container (WAVE_FORMAT_EXTENSIBLE): the top
    /// byte is ignored and bit 23 is the sign.
    I24In32,
    I32,
    F32,
    /// A combination hound refuses sample by sample (e.g. 20 valid bits in
    /// 3 bytes): the data cannot be read, as before.
    Unreadable,
}

impl Encoding {
    fn of(spec: hound::WavSpec, bytes_per_sample: usize) -> Encoding {
        match (spec.sample_format, bytes_per_sample, spec.bits_per_sample) {
            (hound::SampleFormat::Int, 1, 8) => Encoding::U8,
            (hound::SampleFormat::Int, 2, 16) => Encoding::I16,
            (hound::SampleFormat::Int, 3, 24) => Encoding::I24,
            (hound::SampleFormat::Int, 4, 24) => Encoding::I24In32,
            (hound::SampleFormat::Int, 4, 32) => Encoding::I32,
            (hound::SampleFormat::Float, 4, 32) => Encoding::F32,
            _ => Encoding::Unreadable,
        }
    }
}

/// Samples of a PCM/float WAV, read a block at a time: hound opens and
/// checks the header, then each block's raw bytes are read with one read
/// and converted in a tight loop (hound's per-sample iterator cost more
/// than the conversion itself; see docs/PERFORMANCE.md).
pub(crate) struct WavSource {
    /// Positioned in the data chunk, where hound left it after the header.
    data: BufReader<File>,
    pub header: WavHeader,
    encoding: Encoding,
    bytes_per_sample: usize,
    /// Bytes of the data chunk not yet read, by hound's count of samples.
    remaining_bytes: u64,
    /// Raw bytes of the current block.
    raw: Vec<u8>,
    float: bool,
    /// 1 / 2^(bits−1): integer codes to full scale ±1.
    scale: f32,
    /// Frames the data chunk promises, and frames the file actually holds.
    pub promised_frames: u64,
    pub present_frames: u64,
    done: bool,
    pub ended_early_at_frame: Option<u64>,
    frames_read: u64,
}

impl WavSource {
    pub(crate) fn open(path: &Path, header: WavHeader) -> Result<Self, AudioError> {
        let reader = hound::WavReader::open(path).map_err(|e| match e {
            hound::Error::IoError(source) => AudioError::Io {
                file: path.to_path_buf(),
                source,
            },
            other => AudioError::Malformed {
                file: path.to_path_buf(),
                message: format!("WAV header not readable: {other}"),
            },
        })?;
        let spec = reader.spec();
        let float = spec.sample_format == hound::SampleFormat::Float;
        let bits = i32::from(spec.bits_per_sample.clamp(1, 32));
        let scale = (0.5f64).powi(bits - 1) as f32;
        // hound's container size: block align over channels.
        let bytes_per_sample = usize::from(header.block_align / header.channels.max(1)).max(1);
        let encoding = Encoding::of(spec, bytes_per_sample);
        let remaining_bytes = u64::from(reader.len()) * bytes_per_sample as u64;
        let block = u64::from(header.block_align.max(1));
        let promised_frames = header.data_len / block;
        let present_frames = header
            .file_len
            .saturating_sub(header.data_offset)
            .min(header.data_len)
            / block;
        Ok(Self {
            data: reader.into_inner(),
            header,
            encoding,
            bytes_per_sample,
            remaining_bytes,
            raw: Vec::new(),
            float,
            scale,
            promised_frames,
            present_frames,
            done: false,
            ended_early_at_frame: None,
            frames_read: 0,
        })
    }

    /// The magnitude at which a sample counts as clipped: the top integer
    /// code, or 0.9999 for float data (which may exceed 1 without clipping
    /// in the file, but was usually clipped at the converter).
    pub(crate) fn clip_level(&self) -> f32 {
        if self.float {
            super::FLOAT_CLIP_LEVEL
        } else {
            // Half an LSB below the top positive code 1 − 2^−(bits−1).
            1.0 - self.scale * 1.5
        }
    }

    /// Reads up to `BLOCK_FRAMES` interleaved frames into `out`. Returns
    /// false at the end of the data.
    ///
    /// A data chunk cut short by the end of the file (or a read error)
    /// yields the whole samples before the cut, then ends; a trailing
    /// partial frame is dropped and `ended_early_at_frame` records where
    /// the data stopped.
    pub(crate) fn next_block(&mut self, out: &mut Vec<f32>) -> bool {
        out.clear();
        if self.done {
            return false;
        }
        let channels = usize::from(self.header.channels);
        let want = BLOCK_FRAMES * channels;
        let want_bytes = (want as u64 * self.bytes_per_sample as u64).min(self.remaining_bytes);
        self.raw.clear();
        let mut failed = false;
        if self.encoding == Encoding::Unreadable {
            failed = self.remaining_bytes > 0;
        } else if want_bytes > 0 {
            // `take` + `read_to_end` grows the buffer only as bytes arrive,
            // so a header promising more than the file holds costs no more
            // memory than the bytes that are there.
            let result = (&mut self.data).take(want_bytes).read_to_end(&mut self.raw);
            failed = result.is_err() || (self.raw.len() as u64) < want_bytes;
        }
        self.remaining_bytes -= (self.raw.len() as u64).min(self.remaining_bytes);
        decode(self.encoding, self.scale, &self.raw, out);
        // Drop a trailing partial frame (a cut-off file).
        let whole = out.len() / channels * channels;
        out.truncate(whole);
        self.frames_read += (whole / channels) as u64;
        if failed || out.len() < want {
            self.done = true;
            if self.frames_read < self.promised_frames {
                self.ended_early_at_frame = Some(self.frames_read);
            }
        }
        !out.is_empty()
    }
}

/// Converts the whole little-endian samples in `raw` to f32 (integer codes
/// times `scale`) and appends them to `out`; a trailing partial sample is
/// ignored. The conversions are hound's (`Sample::read` for `i32` and
/// `f32`), one loop per encoding.
fn decode(encoding: Encoding, scale: f32, raw: &[u8], out: &mut Vec<f32>) {
    match encoding {
        Encoding::U8 => out.extend(
            raw.iter()
                .map(|&byte| (i32::from(byte) - 128) as f32 * scale),
        ),
        Encoding::I16 => out.extend(
            raw.chunks_exact(2)
                .map(|b| f32::from(i16::from_le_bytes([b[0], b[1]])) * scale),
        ),
        Encoding::I24 => out.extend(raw.chunks_exact(3).map(|b| {
            // Sign-extend from bit 23.
            let code = i32::from_le_bytes([0, b[0], b[1], b[2]]) >> 8;
            code as f32 * scale
        })),
        Encoding::I24In32 => out.extend(raw.chunks_exact(4).map(|b| {
            // The top byte is padding: drop it, sign-extend from bit 23.
            let code = i32::from_le_bytes([0, b[0], b[1], b[2]]) >> 8;
            code as f32 * scale
        })),
        Encoding::I32 => out.extend(
            raw.chunks_exact(4)
                .map(|b| i32::from_le_bytes([b[0], b[1], b[2], b[3]]) as f32 * scale),
        ),
        Encoding::F32 => out.extend(
            raw.chunks_exact(4)
                .map(|b| f32::from_le_bytes([b[0], b[1], b[2], b[3]])),
        ),
        Encoding::Unreadable => {}
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Sample layouts written raw: (format tag, container bytes, valid bits,
    /// extensible header).
    const LAYOUTS: [(u16, u16, u16, bool); 7] = [
        (PCM, 1, 8, false),
        (PCM, 2, 16, false),
        (PCM, 3, 24, false),
        (PCM, 4, 24, true),
        (PCM, 4, 32, false),
        (IEEE_FLOAT, 4, 32, false),
        (IEEE_FLOAT, 4, 32, true),
    ];

    /// A WAV header by the RIFF/WAVE layout (Microsoft's WAVEFORMATEX and
    /// WAVEFORMATEXTENSIBLE, KSDATAFORMAT_SUBTYPE_* GUIDs) followed by
    /// `data`, whose chunk length is `data_len` (larger than `data` for a
    /// file cut short).
    fn wav_bytes(
        (tag, container, valid, extensible): (u16, u16, u16, bool),
        channels: u16,
        data: &[u8],
        data_len: u32,
    ) -> Vec<u8> {
        let rate = 22_050u32;
        let block_align = channels * container;
        let mut fmt = Vec::new();
        fmt.extend_from_slice(&(if extensible { EXTENSIBLE } else { tag }).to_le_bytes());
        fmt.extend_from_slice(&channels.to_le_bytes());
        fmt.extend_from_slice(&rate.to_le_bytes());
        fmt.extend_from_slice(&(rate * u32::from(block_align)).to_le_bytes());
        fmt.extend_from_slice(&block_align.to_le_bytes());
        fmt.extend_from_slice(&(container * 8).to_le_bytes());
        if extensible {
            fmt.extend_from_slice(&22u16.to_le_bytes());
            fmt.extend_from_slice(&valid.to_le_bytes());
            fmt.extend_from_slice(&0u32.to_le_bytes());
            fmt.extend_from_slice(&tag.to_le_bytes());
            fmt.extend_from_slice(&[
                0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xAA, 0x00, 0x38, 0x9B, 0x71,
            ]);
        }
        let mut file = Vec::new();
        file.extend_from_slice(b"RIFF");
        let riff_len = 4 + 8 + fmt.len() as u32 + 8 + data_len;
        file.extend_from_slice(&riff_len.to_le_bytes());
        file.extend_from_slice(b"WAVE");
        file.extend_from_slice(b"fmt ");
        file.extend_from_slice(&(fmt.len() as u32).to_le_bytes());
        file.extend_from_slice(&fmt);
        file.extend_from_slice(b"data");
        file.extend_from_slice(&data_len.to_le_bytes());
        file.extend_from_slice(data);
        file
    }

    /// Every sample hound's own per-sample iterator yields, scaled as the
    /// decoder defines (integer code × 2^−(valid bits − 1), floats as
    /// stored), up to its first error, cut to whole frames.
    fn hound_samples(path: &Path) -> Vec<f32> {
        let mut reader = hound::WavReader::open(path).expect("hound opens the test file");
        let spec = reader.spec();
        let mut samples: Vec<f32> = if spec.sample_format == hound::SampleFormat::Float {
            reader.samples::<f32>().map_while(Result::ok).collect()
        } else {
            let scale = (0.5f64).powi(i32::from(spec.bits_per_sample) - 1) as f32;
            reader
                .samples::<i32>()
                .map_while(Result::ok)
                .map(|code| code as f32 * scale)
                .collect()
        };
        let channels = usize::from(spec.channels);
        samples.truncate(samples.len() / channels * channels);
        samples
    }

    fn bulk_samples(path: &Path) -> (Vec<f32>, WavSource) {
        let WavRoute::Hound(header) = scan(path).expect("the header scan accepts the file") else {
            panic!("PCM/float file routed to the companded decoder");
        };
        let mut source = WavSource::open(path, header).expect("opens");
        let (mut all, mut block) = (Vec::new(), Vec::new());
        while source.next_block(&mut block) {
            assert!(block.len() <= BLOCK_FRAMES * usize::from(source.header.channels));
            all.extend_from_slice(&block);
        }
        (all, source)
    }

    #[test]
    fn bulk_decoding_is_bit_identical_to_hounds_iterator() {
        // hound (the crate the project names for WAV) is the outside
        // reference here: its per-sample iterator decodes each format by its
        // own code (`Sample::read`); the bulk decoder must give the very same
        // bits for every supported format, odd channel counts, several
        // blocks, and a data chunk cut short by the end of the file.
        let dir = tempfile::tempdir().expect("temporary directory");
        let mut state = 0x2545_F491_4F6C_DD1Du64;
        let mut next_byte = move || {
            // xorshift64 (Marsaglia 2003): arbitrary bytes, so every code
            // and every float bit pattern (NaN, ±∞, subnormals) turns up.
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            (state >> 32) as u8
        };
        for layout in LAYOUTS {
            for channels in [1u16, 2, 3, 5] {
                let frame_bytes = usize::from(channels * layout.1);
                let frames = 2 * BLOCK_FRAMES + 37;
                let data: Vec<u8> = (0..frames * frame_bytes).map(|_| next_byte()).collect();
                let full = data.len();
                // Whole file; cut at a block boundary; cut inside a sample of
                // the last block; cut inside a frame (after whole samples);
                // cut inside the first sample.
                let cuts = [
                    full,
                    BLOCK_FRAMES * frame_bytes,
                    full - 1,
                    full - frame_bytes + usize::from(layout.1),
                    1,
                ];
                for cut in cuts {
                    let path = dir
                        .path()
                        .join(format!("{}-{channels}-{cut}.wav", layout.1));
                    let bytes = wav_bytes(layout, channels, &data[..cut], full as u32);
                    std::fs::write(&path, bytes).expect("writes the test file");
                    let expected = hound_samples(&path);
                    let (got, source) = bulk_samples(&path);
                    let what = format!("{layout:?}, {channels} channels, {cut} of {full} bytes");
                    assert_eq!(got.len(), expected.len(), "{what}");
                    let differ = got
                        .iter()
                        .zip(&expected)
                        .position(|(a, b)| a.to_bits() != b.to_bits());
                    assert_eq!(differ, None, "{what}: first differing sample");
                    // The cut is reported at the last whole frame.
                    let whole_frames = (expected.len() / usize::from(channels)) as u64;
                    let early = (cut < full).then_some(whole_frames);
                    assert_eq!(source.ended_early_at_frame, early, "{what}");
                }
            }
        }
    }

    #[test]
    fn combinations_hound_cannot_decode_end_at_once() {
        // 20 valid bits in 3-byte containers: hound opens the header but
        // refuses every sample (its `Sample::read` knows no (3, 20) layout),
        // so the data reads as cut off at frame 0, as before.
        let dir = tempfile::tempdir().expect("temporary directory");
        let path = dir.path().join("20-bit.wav");
        let data = vec![0x11u8; 3 * 100];
        std::fs::write(&path, wav_bytes((PCM, 3, 20, true), 1, &data, 300)).expect("writes");
        assert!(
            hound::WavReader::open(&path)
                .expect("hound opens it")
                .samples::<i32>()
                .next()
                .is_some_and(|sample| sample.is_err()),
            "hound refuses the samples"
        );
        let (got, source) = bulk_samples(&path);
        assert!(got.is_empty());
        assert_eq!(source.ended_early_at_frame, Some(0));
    }
}
