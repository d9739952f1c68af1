//! How a word is normalised: before counting (with the flags of
//! [`TokenOptions`](crate::TokenOptions)) and again, the same way, before
//! a cluster path is looked up for it, so that both sides agree.
//!
//! - NFC (optional, `nfc`): Unicode canonical composition (UAX #15), so
//!   that `é` written as one code point and as `e` plus a combining
//!   accent are one word. Without it they are two words.
//! - Lowercasing (optional, `lowercase`): the Unicode lowercase mapping
//!   of the whole word, as `str::to_lowercase` does it, including the
//!   final sigma rule: `ΣΟΦΟΣ` becomes `σοφος` (a capital sigma at the
//!   end of a word becomes `ς`, elsewhere `σ`). Lowercasing is applied
//!   after NFC.

use std::borrow::Cow;

use unicode_normalization::{
    is_nfc_quick, IsNormalized, UnicodeNormalization,
};

/// True if lowercasing may change `word`: a character that is uppercase
/// or outside ASCII (whose mappings are not all "uppercase" ones).
pub fn needs_lowercasing(word: &str) -> bool {
    word.chars().any(|c| c.is_uppercase() || !c.is_ascii())
}

/// Writes `word` lowercased into `out` (cleared first): the Unicode
/// lowercase mapping of the whole word, final sigma included.
pub fn lowercase_into(word: &str, out: &mut String) {
    out.clear();
    if word.contains('Σ') {
        // The one context-dependent mapping: leave it to the standard
        // library, which allocates (only for words with a capital sigma).
        out.push_str(&word.to_lowercase());
    } else {
        // Every other character maps on its own, exactly as in
        // `str::to_lowercase`, without allocating.
        out.extend(word.chars().flat_map(char::to_lowercase));
    }
}

/// Whether `text` is in NFC; a quick check that is exact for the
/// common case and falls back to normalising.
pub fn is_nfc(text: &str) -> bool {
    match is_nfc_quick(text.chars()) {
        IsNormalized::Yes => true,
        IsNormalized::No => false,
        IsNormalized::Maybe => text.chars().eq(text.nfc()),
    }
}

/// `text` in NFC, borrowed when it already is.
pub fn nfc(text: &str) -> Cow<'_, str> {
    if is_nfc(text) {
        Cow::Borrowed(text)
    } else {
        Cow::Owned(text.nfc().collect())
    }
}

/// Writes `text` in NFC into `out` (cleared first).
pub fn nfc_into(text: &str, out: &mut String) {
    out.clear();
    out.extend(text.nfc());
}

/// `word` normalised as clusters learned with `nfc` and `lowercase`
/// normalised their words: NFC first, then lowercasing; written into
/// `scratch` when that changes anything, else `word` itself.
pub fn normalize<'a>(
    word: &'a str,
    nfc_on: bool,
    lowercase: bool,
    scratch: &'a mut String,
) -> &'a str {
    let composed = if nfc_on { nfc(word) } else { Cow::Borrowed(word) };
    if lowercase && needs_lowercasing(&composed) {
        lowercase_into(&composed, scratch);
        scratch
    } else {
        match composed {
            Cow::Borrowed(word) => word,
            Cow::Owned(composed) => {
                *scratch = composed;
                scratch
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lower(word: &str) -> String {
        let mut out = String::new();
        lowercase_into(word, &mut out);
        out
    }

    #[test]
    fn whole_words_are_lowercased_with_the_final_sigma() {
        // The final-sigma rule of the Unicode lowercase mapping
        // (SpecialCasing.txt, Final_Sigma); the same as the standard
        // library's `str::to_lowercase`.
        assert_eq!(lower("ΣΟΦΟΣ"), "σοφος");
        assert_eq!(lower("ΟΔΥΣΣΕΥΣ"), "οδυσσευς");
        assert_eq!(lower("Σ"), "σ");
        for word in ["The", "ÄRGER", "İstanbul", "ΣΟΦΟΣ.", "aΣb", "ǅ", ""]
        {
            assert_eq!(lower(word), word.to_lowercase(), "{word}");
        }
    }

    #[test]
    fn nfc_composes_and_borrows_what_is_composed() {
        let decomposed = "cafe\u{301}";
        assert!(!is_nfc(decomposed));
        assert_eq!(nfc(decomposed), "caf\u{e9}");
        assert!(matches!(nfc("caf\u{e9}"), Cow::Borrowed(_)));
        let mut out = String::from("junk");
        nfc_into(decomposed, &mut out);
        assert_eq!(out, "caf\u{e9}");
    }

    #[test]
    fn normalize_is_nfc_then_lowercase() {
        let mut s = String::new();
        assert_eq!(normalize("CAFE\u{301}", true, true, &mut s), "caf\u{e9}");
        assert_eq!(
            normalize("CAFE\u{301}", false, true, &mut s),
            "cafe\u{301}"
        );
        assert_eq!(normalize("CAFE\u{301}", true, false, &mut s), "CAF\u{c9}");
        assert_eq!(normalize("word", true, true, &mut s), "word");
    }
}
