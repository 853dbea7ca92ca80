//! Audio input: decoding WAV, FLAC, OGG/Vorbis, MP3 and m4a/AAC to mono
//! samples at the analysis rate, with a report on the signal's condition.
