//! Compressed and companded input through symphonia 0.6: FLAC, OGG/Vorbis,
//! MP3, m4a/AAC, and µ-law/A-law WAV. The container is found by probing the
//! content, the file name's extension being only a hint.
//!
//! Invariant: one decoded packet at a time is held (the codec's own packet
//! size bounds it: 1152 frames for MP3, 1024 for AAC, ≤ 4096 for Vorbis,
//! ≤ 65 535 for FLAC).

use std::panic::{AssertUnwindSafe, catch_unwind};
use std::path::Path;

use symphonia::core::codecs::audio::{AudioDecoder, AudioDecoderOptions};
use symphonia::core::errors::Error as SymphoniaError;
use symphonia::core::formats::probe::Hint;
use symphonia::core::formats::{FormatOptions, FormatReader, TrackType};
use symphonia::core::io::MediaSourceStream;
use symphonia::core::meta::MetadataOptions;

use super::AudioError;
use crate::input::{BoundedFile, InputError};

/// symphonia reads through the byte budget of [`crate::input`].
impl symphonia::core::io::MediaSource for BoundedFile {
    fn is_seekable(&self) -> bool {
        self.is_regular()
    }

    fn byte_len(&self) -> Option<u64> {
        self.regular_len()
    }
}

/// Give up when this many packets in a row fail to decode: the stream is
/// garbage, not a file with a few damaged frames.
const MAX_CONSECUTIVE_BAD_PACKETS: u32 = 50;

pub(crate) struct CodecSource {
    format: Box<dyn FormatReader>,
    decoder: Box<dyn AudioDecoder>,
    track_id: u32,
    pub sample_rate: u32,
    pub channels: u16,
    pub codec_name: String,
    /// Frames decoded so far (at the source rate).
    pub frames: u64,
    pub skipped_packets: u64,
    /// Set when reading stopped before the container's end.
    pub ended_early: Option<String>,
    /// Frames the container's header promises, when it says.
    pub promised_frames: Option<u64>,
    /// A first block decoded during `open` (to learn the rate and channels).
    first: Option<Vec<f32>>,
    done: bool,
}

fn symphonia_message(e: &SymphoniaError) -> String {
    match e {
        SymphoniaError::IoError(io) if io.kind() == std::io::ErrorKind::UnexpectedEof => {
            "the file ends in the middle of the stream".into()
        }
        other => other.to_string(),
    }
}

/// Why probing failed, in words that point at the likely cause.
fn probe_error(path: &Path, e: &SymphoniaError) -> AudioError {
    let file = path.to_path_buf();
    match e {
        SymphoniaError::IoError(io) if io.kind() == std::io::ErrorKind::UnexpectedEof => {
            AudioError::Malformed {
                file,
                message: "is cut off: the file ends inside its header or index; it is probably \
                          truncated"
                    .into(),
            }
        }
        // MP4/m4a keeps its index (the moov box) at the end unless the
        // writer moved it to the front, so a cut file loses it.
        other if other.to_string().contains("moov") => AudioError::Malformed {
            file,
            message: "is an MP4/m4a file without its index (moov box); it is probably \
                      truncated"
                .into(),
        },
        other => AudioError::Unsupported {
            file,
            message: format!(
                "is not a recognised audio file (WAV, FLAC, OGG/Vorbis, MP3 or m4a/AAC): {}",
                symphonia_message(other)
            ),
        },
    }
}

/// Runs a symphonia call, turning a panic inside the decoder into an error:
/// symphonia documents that some malformed streams "may panic", and a bad
/// upload must never take the program down.
fn guarded<T>(path: &Path, what: &str, f: impl FnOnce() -> T) -> Result<T, AudioError> {
    catch_unwind(AssertUnwindSafe(f)).map_err(|_| AudioError::Malformed {
        file: path.to_path_buf(),
        message: format!("the decoder failed while {what}; the file is damaged or not audio"),
    })
}

impl CodecSource {
    pub(crate) fn open(path: &Path) -> Result<Self, AudioError> {
        // Through the byte budget: a device or pipe that never ends is
        // stopped at MAX_AUDIO_BYTES, whatever length it reports.
        let file =
            BoundedFile::open(path, super::MAX_AUDIO_BYTES, "audio files").map_err(|error| {
                match error {
                    InputError::Io { file, source } => AudioError::Io { file, source },
                    InputError::TooLarge { .. } => AudioError::Unusable {
                        file: path.to_path_buf(),
                        message: error.message(),
                    },
                }
            })?;
        let mss = MediaSourceStream::new(Box::new(file), Default::default());
        let mut hint = Hint::new();
        if let Some(ext) = path.extension().and_then(|e| e.to_str()) {
            hint.with_extension(ext);
        }
        let probed = guarded(path, "reading the header", || {
            symphonia::default::get_probe().probe(
                &hint,
                mss,
                FormatOptions::default(),
                MetadataOptions::default(),
            )
        })?;
        let format = probed.map_err(|e| probe_error(path, &e))?;
        let track =
            format
                .default_track(TrackType::Audio)
                .ok_or_else(|| AudioError::Unsupported {
                    file: path.to_path_buf(),
                    message: "contains no audio track".into(),
                })?;
        let track_id = track.id;
        let promised_frames = track.num_frames;
        let params = track
            .codec_params
            .as_ref()
            .and_then(|p| p.audio())
            .ok_or_else(|| AudioError::Unsupported {
                file: path.to_path_buf(),
                message: "the audio track has no codec parameters".into(),
            })?
            .clone();
        let registry = symphonia::default::get_codecs();
        let codec_name = registry
            .get_audio_decoder(params.codec)
            .map(|d| d.codec.info.short_name.to_string())
            .unwrap_or_else(|| format!("{}", params.codec));
        if let Some(rate) = params.sample_rate {
            super::wav::check_sample_rate(path, rate, "")?;
        }
        let decoder = guarded(path, "setting up the decoder", || {
            registry.make_audio_decoder(&params, &AudioDecoderOptions::default())
        })?
        .map_err(|e| AudioError::Unsupported {
            file: path.to_path_buf(),
            message: format!(
                "its codec ({codec_name}) is not supported: {}",
                symphonia_message(&e)
            ),
        })?;
        let mut source = Self {
            format,
            decoder,
            track_id,
            sample_rate: params.sample_rate.unwrap_or(0),
            channels: params.channels.as_ref().map_or(0, |c| c.count() as u16),
            codec_name,
            frames: 0,
            skipped_packets: 0,
            ended_early: None,
            promised_frames,
            first: None,
            done: false,
        };
        // Decode up to the first non-empty packet so the rate and channel
        // count are those of the actual stream (AAC may only know them then).
        let mut first = Vec::new();
        source.decode_next(path, &mut first)?;
        if first.is_empty() {
            let rate = f64::from(source.sample_rate.max(1));
            let message = match (&source.ended_early, source.promised_frames) {
                (Some(why), _) => format!("contains no decodable audio ({why})"),
                (None, Some(n)) if n > 0 => format!(
                    "contains no decodable audio although its header promises {:.2} s; \
                     the file is damaged or truncated",
                    n as f64 / rate
                ),
                _ if source.skipped_packets > 0 => format!(
                    "contains no decodable audio ({} damaged packets)",
                    source.skipped_packets
                ),
                _ => "contains no audio samples".into(),
            };
            return Err(AudioError::Unusable {
                file: path.to_path_buf(),
                message,
            });
        }
        source.first = Some(first);
        Ok(source)
    }

    /// Next block of interleaved samples; false at the end.
    pub(crate) fn next_block(
        &mut self,
        path: &Path,
        out: &mut Vec<f32>,
    ) -> Result<bool, AudioError> {
        out.clear();
        if let Some(first) = self.first.take() {
            *out = first;
            return Ok(true);
        }
        self.decode_next(path, out)?;
        Ok(!out.is_empty())
    }

    fn seconds(&self) -> f64 {
        self.frames as f64 / f64::from(self.sample_rate.max(1))
    }

    fn decode_next(&mut self, path: &Path, out: &mut Vec<f32>) -> Result<(), AudioError> {
        let mut bad_in_a_row = 0;
        while !self.done {
            let packet = match guarded(path, "reading a packet", || self.format.next_packet())? {
                Ok(Some(p)) => p,
                Ok(None) => {
                    self.done = true;
                    break;
                }
                Err(SymphoniaError::ResetRequired) => {
                    self.done = true;
                    self.ended_early = Some(format!(
                        "a second, chained stream starts at {:.2} s and was not read",
                        self.seconds()
                    ));
                    break;
                }
                Err(e) => {
                    self.done = true;
                    self.ended_early = Some(symphonia_message(&e));
                    break;
                }
            };
            if packet.track_id != self.track_id {
                continue;
            }
            let decoded = guarded(path, "decoding a packet", || {
                self.decoder.decode(&packet).map(|buf| {
                    let rate = buf.spec().rate();
                    let channels = buf.spec().channels().count();
                    let mut v = Vec::new();
                    buf.copy_to_vec_interleaved::<f32>(&mut v);
                    (rate, channels, v)
                })
            })?;
            match decoded {
                Ok((rate, channels, samples)) => {
                    bad_in_a_row = 0;
                    if samples.is_empty() {
                        continue;
                    }
                    if channels == 0 {
                        return Err(AudioError::Malformed {
                            file: path.to_path_buf(),
                            message: format!(
                                "the stream has 0 channels at {:.2} s",
                                self.seconds()
                            ),
                        });
                    }
                    if self.frames == 0 {
                        super::wav::check_sample_rate(path, rate, "")?;
                        self.sample_rate = rate;
                        self.channels = channels as u16;
                    } else if rate != self.sample_rate || channels != usize::from(self.channels) {
                        self.done = true;
                        self.ended_early = Some(format!(
                            "the stream changes to {rate} Hz, {channels} channels at {:.2} s; \
                             only the part before was read",
                            self.seconds()
                        ));
                        break;
                    }
                    self.frames += (samples.len() / channels) as u64;
                    *out = samples;
                    return Ok(());
                }
                Err(SymphoniaError::DecodeError(_)) | Err(SymphoniaError::IoError(_)) => {
                    self.skipped_packets += 1;
                    bad_in_a_row += 1;
                    if bad_in_a_row >= MAX_CONSECUTIVE_BAD_PACKETS {
                        return Err(AudioError::Malformed {
                            file: path.to_path_buf(),
                            message: format!(
                                "{MAX_CONSECUTIVE_BAD_PACKETS} packets in a row could not be \
                                 decoded at {:.2} s; the file is damaged or not audio",
                                self.seconds()
                            ),
                        });
                    }
                }
                Err(e) => {
                    return Err(AudioError::Unsupported {
                        file: path.to_path_buf(),
                        message: format!(
                            "the {} decoder stopped at {:.2} s: {}",
                            self.codec_name,
                            self.seconds(),
                            symphonia_message(&e)
                        ),
                    });
                }
            }
        }
        Ok(())
    }
}
