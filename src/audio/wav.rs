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

/// Samples of a PCM/float WAV, read a block at a time through hound.
pub(crate) struct WavSource {
    reader: hound::WavReader<BufReader<File>>,
    pub header: WavHeader,
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
        let block = u64::from(header.block_align.max(1));
        let promised_frames = header.data_len / block;
        let present_frames = header
            .file_len
            .saturating_sub(header.data_offset)
            .min(header.data_len)
            / block;
        Ok(Self {
            reader,
            header,
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
    pub(crate) fn next_block(&mut self, out: &mut Vec<f32>) -> bool {
        out.clear();
        if self.done {
            return false;
        }
        let channels = usize::from(self.header.channels);
        let want = BLOCK_FRAMES * channels;
        let mut failed = false;
        if self.float {
            let mut it = self.reader.samples::<f32>();
            for _ in 0..want {
                match it.next() {
                    Some(Ok(x)) => out.push(x),
                    Some(Err(_)) => {
                        failed = true;
                        break;
                    }
                    None => break,
                }
            }
        } else {
            let scale = self.scale;
            let mut it = self.reader.samples::<i32>();
            for _ in 0..want {
                match it.next() {
                    Some(Ok(x)) => out.push(x as f32 * scale),
                    Some(Err(_)) => {
                        failed = true;
                        break;
                    }
                    None => break,
                }
            }
        }
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
