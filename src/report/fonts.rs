//! The fonts the report is set in, embedded into the binary.
//!
//! The report never looks at the host's fonts: typst and plotters both get exactly these bytes,
//! in this order, so a report's layout cannot depend on the machine that rendered it.

use std::sync::OnceLock;

use crate::provenance::hex;
use sha2::{Digest, Sha256};
use typst::foundations::Bytes;
use typst::text::{Font, FontBook};
use typst::utils::LazyHash;

/// Family of the body text; also the family written into plot SVGs.
pub const SANS_FAMILY: &str = "Noto Sans";
/// Family used for hashes, paths and commands.
pub const MONO_FAMILY: &str = "Noto Sans Mono";
/// Family used for formulas (it carries an OpenType MATH table).
pub const MATH_FAMILY: &str = "STIX Math";

/// Regular weight of [`SANS_FAMILY`].
pub static SANS_REGULAR: &[u8] = include_bytes!("../../fonts/NotoSans-Regular.ttf");
/// Bold weight of [`SANS_FAMILY`].
pub static SANS_BOLD: &[u8] = include_bytes!("../../fonts/NotoSans-Bold.ttf");
/// [`MONO_FAMILY`], regular.
pub static MONO_REGULAR: &[u8] = include_bytes!("../../fonts/NotoSansMono-Regular.ttf");
/// [`MATH_FAMILY`], regular. (Debian's build of Noto Sans Math lacks the OpenType MATH table
/// that typst needs for formula layout, so the math face is STIX.)
pub static MATH_REGULAR: &[u8] = include_bytes!("../../fonts/STIXMath-Regular.otf");

/// Every embedded font file with its file name, in serving order. The order is part of the
/// output (it fixes the font book's indices), so it must never depend on anything at run time.
pub const EMBEDDED: [(&str, &[u8]); 4] = [
    ("NotoSans-Regular.ttf", SANS_REGULAR),
    ("NotoSans-Bold.ttf", SANS_BOLD),
    ("NotoSansMono-Regular.ttf", MONO_REGULAR),
    ("STIXMath-Regular.otf", MATH_REGULAR),
];

/// SHA-256 (lowercase hex) over the bytes of every embedded font, concatenated in serving order.
/// It changes exactly when the set, the order or the content of the fonts changes.
pub fn fonts_sha256() -> String {
    let mut hasher = Sha256::new();
    for (_, bytes) in EMBEDDED {
        hasher.update(bytes);
    }
    hex(&hasher.finalize())
}

/// The parsed faces and the book that indexes them, built once per process.
pub(crate) struct FontSet {
    pub fonts: Vec<Font>,
    pub book: LazyHash<FontBook>,
}

/// The parsed embedded fonts. Fails only if a shipped font file is corrupt, which is a build
/// defect, not a user error; the caller reports it as an internal error.
pub(crate) fn font_set() -> Result<&'static FontSet, String> {
    static SET: OnceLock<Result<FontSet, String>> = OnceLock::new();
    SET.get_or_init(|| {
        let mut fonts = Vec::new();
        for (name, bytes) in EMBEDDED {
            let before = fonts.len();
            fonts.extend(Font::iter(Bytes::new(bytes)));
            if fonts.len() == before {
                return Err(format!("embedded font {name} could not be parsed"));
            }
        }
        let book = LazyHash::new(FontBook::from_fonts(&fonts));
        Ok(FontSet { fonts, book })
    })
    .as_ref()
    .map_err(Clone::clone)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_family_the_template_names_is_served() {
        let set = font_set().expect("embedded fonts parse");
        let families: Vec<String> = set
            .fonts
            .iter()
            .map(|f| f.info().family.to_lowercase())
            .collect();
        for family in [SANS_FAMILY, MONO_FAMILY, MATH_FAMILY] {
            assert!(
                families.contains(&family.to_lowercase()),
                "{family} missing: {families:?}"
            );
        }
        // One face per file: the book's indices follow EMBEDDED.
        assert_eq!(set.fonts.len(), EMBEDDED.len());
    }

    #[test]
    fn fonts_digest_is_hex_and_tracks_content() {
        let digest = fonts_sha256();
        assert_eq!(digest.len(), 64);
        assert!(
            digest
                .bytes()
                .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
        );
        // Hashing the regular face alone must differ: the digest covers every file.
        assert_ne!(digest, hex(&Sha256::digest(SANS_REGULAR)));
    }

    #[test]
    fn readme_records_each_file_and_its_digest() {
        // fonts/README.md is the record an auditor reads; it must match what is embedded.
        let readme = include_str!("../../fonts/README.md");
        for (name, bytes) in EMBEDDED {
            let digest = hex(&Sha256::digest(bytes));
            let row = readme
                .lines()
                .find(|l| l.contains(&format!("`{name}`")))
                .unwrap_or("");
            assert!(row.contains(&digest), "{name}: README lacks {digest}");
        }
    }

    #[test]
    fn hex_matches_known_digest() {
        // SHA-256 of the empty string, FIPS 180-2 / common practice.
        assert_eq!(
            hex(&Sha256::digest(b"")),
            "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855"
        );
    }
}
