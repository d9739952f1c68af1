//! Raw-text tokenization: this module owns the single rule set that turns
//! one line of social-media or book text into a sequence of tokens, used
//! alike when counting words for clustering and when extracting features
//! for a sequence labeler. Tokens are borrowed slices of the input line;
//! nothing is allocated per token and the whole line is processed in one
//! linear pass, so lines of many megabytes are fine.
//!
//! # Rules
//!
//! 1. **Whitespace** (any character with the Unicode `White_Space`
//!    property, e.g. space, tab, no-break space, ideographic space) always
//!    separates tokens and never appears in one. The line is first cut at
//!    whitespace into chunks; every rule below works inside one chunk.
//! 2. **Words and punctuation** follow Unicode word boundaries (UAX #29).
//!    A word such as `don't`, `3.5`, `1,000` or `U.S` stays whole, while
//!    each punctuation or symbol character becomes a token of its own
//!    (`end.` gives `end` and `.`; `?!` gives `?` and `!`). An emoji with
//!    its modifiers or joiners stays one token; ideographs are one token
//!    each. Segments made only of whitespace are dropped.
//! 3. **URLs** start with `http://`, `https://` or `www.` (any letter
//!    case) where the previous character is not an ASCII letter, digit or
//!    `_` (so `awww.` is a word, but a URL glued to preceding CJK text is
//!    found). A URL runs to the end of the chunk, or up to the first CJK
//!    punctuation mark or bracket (such as `。`, `，` or `「`), which is
//!    practically never part of a link. Trailing characters that end a
//!    sentence or close a quote are then removed: `. , ; : ! ? ' "`,
//!    `… ’ ” » ›` and the full-width `！`, `？` and `，`. A trailing `)`,
//!    `]`, `}` or `>` is removed too, unless it closes a bracket opened
//!    inside the URL: `https://x.org/Rust_(language)` keeps its last
//!    parenthesis while `(see https://x.org)` loses it. A prefix with
//!    nothing left after this trimming is not a URL.
//! 4. **E-mail addresses** are `local@domain`. The local part is the
//!    longest run of ASCII letters, digits and `._%+-` (plus `_`, which is
//!    common in real addresses) right before the `@`, with leading
//!    non-alphanumeric characters left outside. The domain is two or more
//!    labels joined by single dots; a label is ASCII letters, digits and
//!    `-`, starting with a letter or digit. Hyphens at the end of the
//!    domain are left outside, the last label must contain a letter, and
//!    the character after the address must not be a letter, digit or `_`
//!    (Unicode). E-mail detection wins over handle detection, so the `@`
//!    of an address never starts a handle.
//! 5. **Handles** are `@` followed by one or more letters, digits or `_`
//!    (Unicode letters and digits allowed, with any combining marks that
//!    belong to them), where the character before the `@` is not a letter,
//!    digit or `_`. So `x@bob` is three tokens, while `(@bob)` gives `(`,
//!    `@bob` and `)`.
//! 6. **Hashtags** are `#` followed by letters, digits or `_`, at least
//!    one of them a letter or digit, under the same preceding-character
//!    condition as handles. Unicode letters are allowed (`#café`, `#日本`),
//!    so is a tag of digits only (`#2024`); `C#` and `#_` are not tags.
//!
//! Because every token is a slice of a chunk and every chunk is covered by
//! tokens, concatenating the tokens of a line gives back exactly the line
//! with its whitespace removed.

use unicode_segmentation::UnicodeSegmentation;

/// Appends the tokens of `line` to `out`, in order.
///
/// Tokens borrow from `line`; existing contents of `out` are kept. See the
/// module documentation for the rules. Any valid UTF-8 input is accepted
/// and the running time is linear in the length of `line`.
pub fn tokenize<'a>(line: &'a str, out: &mut Vec<&'a str>) {
    for chunk in line.split(char::is_whitespace) {
        if !chunk.is_empty() {
            tokenize_chunk(chunk, out);
        }
    }
}

/// Tokenizes one whitespace-free chunk.
///
/// Walks the bytes of `chunk` looking for the ASCII characters that can
/// start a special token (`h`, `w`, `@`, `#`). A UTF-8 continuation or
/// lead byte is never ASCII, so every byte matched here sits on a
/// character boundary. Plain text between special tokens goes through the
/// word-boundary splitter.
fn tokenize_chunk<'a>(chunk: &'a str, out: &mut Vec<&'a str>) {
    let bytes = chunk.as_bytes();
    // Start of the text that has not been emitted yet.
    let mut pending = 0;
    let mut i = 0;
    while i < bytes.len() {
        let span = match bytes[i] {
            b'h' | b'H' | b'w' | b'W' => url_end(chunk, i).map(|e| (i, e)),
            b'@' => email_span(chunk, pending, i)
                .or_else(|| handle_end(chunk, i).map(|e| (i, e))),
            b'#' => hashtag_end(chunk, i).map(|e| (i, e)),
            _ => None,
        };
        match span {
            Some((start, end)) => {
                push_words(&chunk[pending..start], out);
                out.push(&chunk[start..end]);
                pending = end;
                i = end;
            }
            None => i += 1,
        }
    }
    push_words(&chunk[pending..], out);
}

/// Pushes the UAX #29 word segments of `text`, skipping whitespace-only
/// segments.
fn push_words<'a>(text: &'a str, out: &mut Vec<&'a str>) {
    out.extend(
        text.split_word_bounds()
            .filter(|seg| !seg.chars().all(char::is_whitespace)),
    );
}

/// True for ASCII letters, digits and `_`.
fn is_ascii_word(b: u8) -> bool {
    b.is_ascii_alphanumeric() || b == b'_'
}

/// True for Unicode letters, digits and `_`.
fn is_word_char(c: char) -> bool {
    c.is_alphanumeric() || c == '_'
}

/// True when the character before byte offset `i` of `chunk` is a word
/// character. `i` must be a character boundary.
fn preceded_by_word(chunk: &str, i: usize) -> bool {
    chunk[..i].chars().next_back().is_some_and(is_word_char)
}

/// URL prefixes, matched without regard to ASCII letter case.
const URL_PREFIXES: [&str; 3] = ["https://", "http://", "www."];

/// CJK punctuation and brackets that end a URL even without whitespace.
fn is_url_stop(c: char) -> bool {
    matches!(
        c,
        '\u{3001}'..='\u{3002}'
            | '\u{3008}'..='\u{3011}'
            | '\u{3014}'..='\u{301B}'
            | '\u{FF01}'
            | '\u{FF08}'
            | '\u{FF09}'
            | '\u{FF0C}'
            | '\u{FF1A}'
            | '\u{FF1B}'
            | '\u{FF1F}'
            | '\u{FF61}'
    )
}

/// Characters removed from the end of a URL, apart from closing brackets.
fn is_url_trailing(c: char) -> bool {
    matches!(
        c,
        '.' | ','
            | ';'
            | ':'
            | '!'
            | '?'
            | '\''
            | '"'
            | '\u{2026}'
            | '\u{2019}'
            | '\u{201D}'
            | '\u{00BB}'
            | '\u{203A}'
            | '\u{FF01}'
            | '\u{FF0C}'
            | '\u{FF1F}'
    )
}

/// Opening and closing brackets balanced when trimming a URL.
const URL_BRACKETS: [(u8, u8); 4] =
    [(b'(', b')'), (b'[', b']'), (b'{', b'}'), (b'<', b'>')];

/// If a URL starts at byte `i` of `chunk`, returns its end offset.
fn url_end(chunk: &str, i: usize) -> Option<usize> {
    let bytes = chunk.as_bytes();
    if i > 0 && is_ascii_word(bytes[i - 1]) {
        return None;
    }
    let rest = &bytes[i..];
    let prefix = URL_PREFIXES.iter().find(|p| {
        rest.len() >= p.len()
            && rest[..p.len()].eq_ignore_ascii_case(p.as_bytes())
    })?;
    // The prefix is ASCII, so this is a character boundary.
    let body = i + prefix.len();
    let end =
        chunk[body..].find(is_url_stop).map_or(chunk.len(), |k| body + k);

    let mut opens = [0usize; URL_BRACKETS.len()];
    let mut closes = [0usize; URL_BRACKETS.len()];
    for &b in &bytes[body..end] {
        for (k, &(open, close)) in URL_BRACKETS.iter().enumerate() {
            if b == open {
                opens[k] += 1;
            } else if b == close {
                closes[k] += 1;
            }
        }
    }

    let mut stop = end;
    while let Some(c) = chunk[body..stop].chars().next_back() {
        let closer =
            URL_BRACKETS.iter().position(|&(_, close)| c == close as char);
        if let Some(k) = closer {
            if opens[k] >= closes[k] {
                // This bracket closes one opened inside the URL.
                break;
            }
            closes[k] -= 1;
        } else if !is_url_trailing(c) {
            break;
        }
        stop -= c.len_utf8();
    }
    (stop > body).then_some(stop)
}

/// True for bytes allowed in the local part of an e-mail address.
fn is_local_byte(b: u8) -> bool {
    b.is_ascii_alphanumeric() || matches!(b, b'.' | b'_' | b'%' | b'+' | b'-')
}

/// True for bytes allowed in a domain label.
fn is_label_byte(b: u8) -> bool {
    b.is_ascii_alphanumeric() || b == b'-'
}

/// If the `@` at byte `at` of `chunk` belongs to an e-mail address that
/// starts no earlier than `floor`, returns the address span.
fn email_span(chunk: &str, floor: usize, at: usize) -> Option<(usize, usize)> {
    let bytes = chunk.as_bytes();
    let mut start = at;
    while start > floor && is_local_byte(bytes[start - 1]) {
        start -= 1;
    }
    while start < at && !bytes[start].is_ascii_alphanumeric() {
        start += 1;
    }
    if start == at {
        return None;
    }

    let mut pos = at + 1;
    let mut labels = 0;
    let mut end;
    let mut last_label_start;
    loop {
        if pos >= bytes.len() || !bytes[pos].is_ascii_alphanumeric() {
            return None;
        }
        last_label_start = pos;
        while pos < bytes.len() && is_label_byte(bytes[pos]) {
            pos += 1;
        }
        labels += 1;
        end = pos;
        let more = pos + 1 < bytes.len()
            && bytes[pos] == b'.'
            && bytes[pos + 1].is_ascii_alphanumeric();
        if !more {
            break;
        }
        pos += 1;
    }
    while bytes[end - 1] == b'-' {
        end -= 1;
    }
    let last_label = &bytes[last_label_start..end];
    if labels < 2 || !last_label.iter().any(u8::is_ascii_alphabetic) {
        return None;
    }
    // `end` follows an ASCII byte, so it is a character boundary.
    if chunk[end..].chars().next().is_some_and(is_word_char) {
        return None;
    }
    Some((start, end))
}

/// Scans a handle or hashtag name starting at byte `start` of `chunk`.
///
/// Returns the end offset of the name and whether it holds at least one
/// letter or digit. The name is a run of grapheme clusters, each starting
/// with a letter, digit or `_`, so combining marks stay attached.
fn name_end(chunk: &str, start: usize) -> (usize, bool) {
    let mut end = start;
    let mut has_alnum = false;
    for (k, g) in chunk[start..].grapheme_indices(true) {
        match g.chars().next() {
            Some(c) if c.is_alphanumeric() => has_alnum = true,
            Some('_') => {}
            _ => break,
        }
        end = start + k + g.len();
    }
    (end, has_alnum)
}

/// If a handle starts at the `@` at byte `i` of `chunk`, returns its end.
fn handle_end(chunk: &str, i: usize) -> Option<usize> {
    if preceded_by_word(chunk, i) {
        return None;
    }
    let (end, _) = name_end(chunk, i + 1);
    (end > i + 1).then_some(end)
}

/// If a hashtag starts at the `#` at byte `i` of `chunk`, returns its end.
fn hashtag_end(chunk: &str, i: usize) -> Option<usize> {
    if preceded_by_word(chunk, i) {
        return None;
    }
    let (end, has_alnum) = name_end(chunk, i + 1);
    has_alnum.then_some(end)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn toks(line: &str) -> Vec<&str> {
        let mut out = Vec::new();
        tokenize(line, &mut out);
        out
    }

    #[test]
    fn plain_sentence() {
        assert_eq!(
            toks("The cat sat on the mat."),
            ["The", "cat", "sat", "on", "the", "mat", "."]
        );
    }

    #[test]
    fn punctuation_is_split_per_character() {
        assert_eq!(
            toks("Wait... what?! (yes) \"no\" -- ok;"),
            [
                "Wait", ".", ".", ".", "what", "?", "!", "(", "yes", ")",
                "\"", "no", "\"", "-", "-", "ok", ";"
            ]
        );
    }

    #[test]
    fn contractions_stay_whole() {
        assert_eq!(
            toks("don't can't I'm we\u{2019}re dogs' 'tis"),
            ["don't", "can't", "I'm", "we\u{2019}re", "dogs", "'", "'", "tis"]
        );
    }

    #[test]
    fn numbers() {
        assert_eq!(
            toks("It costs 3.5 or 1,000 (i.e. 1,000.50) at 10%, -3."),
            [
                "It", "costs", "3.5", "or", "1,000", "(", "i.e", ".",
                "1,000.50", ")", "at", "10", "%", ",", "-", "3", "."
            ]
        );
    }

    #[test]
    fn urls_with_trailing_punctuation() {
        assert_eq!(
            toks("see http://example.com/a?b=1&c=2."),
            ["see", "http://example.com/a?b=1&c=2", "."]
        );
        assert_eq!(
            toks("(https://x.org/path)."),
            ["(", "https://x.org/path", ")", "."]
        );
        assert_eq!(
            toks("Visit WWW.Example.COM!"),
            ["Visit", "WWW.Example.COM", "!"]
        );
        assert_eq!(
            toks("\"HTTPS://x.org/q\","),
            ["\"", "HTTPS://x.org/q", "\"", ","]
        );
        assert_eq!(toks("<http://x.org/a>"), ["<", "http://x.org/a", ">"]);
        assert_eq!(
            toks("\u{201C}www.x.org\u{201D}\u{2026}"),
            ["\u{201C}", "www.x.org", "\u{201D}", "\u{2026}"]
        );
    }

    #[test]
    fn urls_keep_balanced_brackets() {
        assert_eq!(
            toks("https://en.x.org/wiki/Rust_(language)"),
            ["https://en.x.org/wiki/Rust_(language)"]
        );
        assert_eq!(
            toks("(https://en.x.org/wiki/Rust_(language))."),
            ["(", "https://en.x.org/wiki/Rust_(language)", ")", "."]
        );
        assert_eq!(toks("http://x.org/[1]]"), ["http://x.org/[1]", "]"]);
    }

    #[test]
    fn url_inner_punctuation_and_case() {
        assert_eq!(
            toks("hTtP://a.b/c,d;e:f!g?h."),
            ["hTtP://a.b/c,d;e:f!g?h", "."]
        );
    }

    #[test]
    fn not_urls() {
        assert_eq!(toks("http://"), ["http", ":", "/", "/"]);
        assert_eq!(toks("http://."), ["http", ":", "/", "/", "."]);
        assert_eq!(toks("awww."), ["awww", "."]);
        assert_eq!(toks("www..."), ["www", ".", ".", "."]);
        assert_eq!(toks("ftp://x.org"), ["ftp", ":", "/", "/", "x.org"]);
    }

    #[test]
    fn url_after_cjk_text_stops_at_cjk_punctuation() {
        assert_eq!(
            toks("请看http://x.cn/a。谢谢"),
            ["请", "看", "http://x.cn/a", "。", "谢", "谢"]
        );
        assert_eq!(toks("「www.x.jp」"), ["「", "www.x.jp", "」"]);
    }

    #[test]
    fn emails() {
        assert_eq!(
            toks("Mail john.doe+tag@mail.example.co.uk."),
            ["Mail", "john.doe+tag@mail.example.co.uk", "."]
        );
        assert_eq!(toks("<a_b%c@x-y.org>,"), ["<", "a_b%c@x-y.org", ">", ","]);
        assert_eq!(
            toks("...John@Example.COM?"),
            [".", ".", ".", "John@Example.COM", "?"]
        );
        assert_eq!(toks("a@b.com-"), ["a@b.com", "-"]);
        assert_eq!(toks("mail:x@y.io"), ["mail", ":", "x@y.io"]);
    }

    #[test]
    fn not_emails() {
        assert_eq!(toks("john@localhost"), ["john", "@", "localhost"]);
        assert_eq!(toks("a@b..com"), ["a", "@", "b", ".", ".", "com"]);
        assert_eq!(toks("x@1.5"), ["x", "@", "1.5"]);
        assert_eq!(toks("a@b.com_x"), ["a", "@", "b.com_x"]);
    }

    #[test]
    fn at_sign_inside_email_is_not_a_handle() {
        assert_eq!(
            toks("write bob@example.com or @bob"),
            ["write", "bob@example.com", "or", "@bob"]
        );
        assert_eq!(toks("x@bob"), ["x", "@", "bob"]);
    }

    #[test]
    fn handles() {
        assert_eq!(
            toks("@alice_99: hi @Bob! (@carol) @josé"),
            ["@alice_99", ":", "hi", "@Bob", "!", "(", "@carol", ")", "@josé"]
        );
        assert_eq!(toks("@"), ["@"]);
        assert_eq!(toks("@@dave"), ["@", "@dave"]);
        assert_eq!(toks("@___"), ["@___"]);
        assert_eq!(toks("@bob's"), ["@bob", "'", "s"]);
    }

    #[test]
    fn hashtags() {
        assert_eq!(
            toks("#rust #café #日本 #2024 #snake_case!"),
            ["#rust", "#café", "#日本", "#2024", "#snake_case", "!"]
        );
        // Decomposed accent: the combining mark stays in the tag.
        assert_eq!(toks("#cafe\u{301}."), ["#cafe\u{301}", "."]);
        assert_eq!(toks("#_x"), ["#_x"]);
    }

    #[test]
    fn not_hashtags() {
        assert_eq!(toks("#_"), ["#", "_"]);
        assert_eq!(toks("C#"), ["C", "#"]);
        assert_eq!(toks("##a"), ["#", "#a"]);
        assert_eq!(toks("# tag"), ["#", "tag"]);
        assert_eq!(toks("a#b"), ["a", "#", "b"]);
    }

    #[test]
    fn emoji() {
        assert_eq!(
            toks("I \u{2764}\u{FE0F} Rust \u{1F44D}\u{1F3FD}\u{1F44D}"),
            [
                "I",
                "\u{2764}\u{FE0F}",
                "Rust",
                "\u{1F44D}\u{1F3FD}",
                "\u{1F44D}"
            ]
        );
        let family = "\u{1F468}\u{200D}\u{1F469}\u{200D}\u{1F467}";
        let flag = "\u{1F1EB}\u{1F1F7}";
        let line = format!("{family}{flag}!");
        assert_eq!(toks(&line), [family, flag, "!"]);
        assert_eq!(toks("#tag\u{1F525}"), ["#tag", "\u{1F525}"]);
    }

    #[test]
    fn cjk() {
        assert_eq!(toks("我爱北京。"), ["我", "爱", "北", "京", "。"]);
        assert_eq!(toks("カタカナです"), ["カタカナ", "で", "す"]);
    }

    #[test]
    fn empty_and_whitespace_only() {
        assert!(toks("").is_empty());
        assert!(toks(" \t\r\n\u{A0}\u{2003}\u{3000}\u{2028}").is_empty());
    }

    #[test]
    fn unicode_whitespace_separates() {
        assert_eq!(
            toks("a\tb\u{A0}c\u{2003}d\u{3000}e\r\n"),
            ["a", "b", "c", "d", "e"]
        );
    }

    #[test]
    fn appends_to_existing_output() {
        let mut out = vec!["keep"];
        tokenize("two words", &mut out);
        tokenize("", &mut out);
        tokenize("more", &mut out);
        assert_eq!(out, ["keep", "two", "words", "more"]);
    }

    /// Checks the invariants every tokenization must satisfy.
    fn check_invariants(line: &str) {
        let out = toks(line);
        let joined: String = out.concat();
        let expected: String =
            line.chars().filter(|c| !c.is_whitespace()).collect();
        assert_eq!(joined, expected, "concatenation differs for {line:?}");
        let range = line.as_bytes().as_ptr_range();
        for t in &out {
            assert!(!t.is_empty(), "empty token in {line:?}");
            assert!(!t.chars().any(char::is_whitespace), "{t:?} in {line:?}");
            let p = t.as_ptr();
            assert!(range.start <= p && p < range.end, "{t:?} not borrowed");
        }
    }

    #[test]
    fn concatenation_equals_line_without_whitespace() {
        let inputs = [
            "",
            "   ",
            "Hello, world!",
            "He said: \u{201C}don't go\u{201D} \u{2014} and left.",
            "prices 3.5, 1,000 and 1.000,50\u{20AC}",
            "see (https://x.org/a_(b)), then www.y.com.",
            "http://x.org\u{3002}\u{8C22}",
            "mail a.b@c.d.com, @h @h@h x@y #t#t ##",
            " \u{301}leading mark, x \u{301}\u{301}",
            "\u{FEFF}bom and \u{200B}zero\u{200D}width",
            "\u{1F468}\u{200D}\u{1F469} \u{1F1FA}\u{1F1F8}\u{1F1EB}",
            "\u{928}\u{92E}\u{938}\u{94D}\u{924}\u{947} #\u{928}\u{92E}",
            "mixed\u{3000}\u{6F22}\u{5B57}\u{306F}ok\u{FF01}",
            "@\u{301} #\u{301}a http://\u{301} a@\u{301}b.c",
            "\u{10FFFF}\u{FFFD}\u{0}\u{7F}tab\tend",
        ];
        for line in inputs {
            check_invariants(line);
        }
    }

    #[test]
    fn concatenation_property_on_generated_lines() {
        // Small fixed alphabet of characters that exercise every rule.
        const ALPHABET: [&str; 28] = [
            "a",
            "Z",
            "h",
            "t",
            "p",
            "s",
            "w",
            "://",
            "www.",
            "http",
            ".",
            ",",
            "@",
            "#",
            "_",
            "(",
            ")",
            "'",
            " ",
            "\t",
            "\u{A0}",
            "\u{E9}",
            "\u{301}",
            "\u{3002}",
            "\u{4E2D}",
            "\u{1F44D}",
            "\u{200D}",
            "-",
        ];
        // Deterministic linear congruential generator.
        let mut state: u64 = 0x2545_F491_4F6C_DD1D;
        let mut next = move || {
            state = state
                .wrapping_mul(6_364_136_223_846_793_005)
                .wrapping_add(1_442_695_040_888_963_407);
            (state >> 33) as usize
        };
        let mut line = String::new();
        for _ in 0..2000 {
            line.clear();
            let len = next() % 40;
            for _ in 0..len {
                line.push_str(ALPHABET[next() % ALPHABET.len()]);
            }
            check_invariants(&line);
        }
    }

    #[test]
    fn long_pathological_lines_are_linear() {
        let n = 200_000;
        assert_eq!(toks(&"@".repeat(n)).len(), n);
        assert_eq!(toks(&"a@".repeat(n)).len(), 2 * n);
        assert_eq!(toks(&"#".repeat(n)).len(), n);
        let url = format!("http://x{}", ")".repeat(n));
        assert_eq!(toks(&url).len(), 1 + n);
        let dots = format!("www.{}", ".".repeat(n));
        assert_eq!(toks(&dots).len(), 1 + (n + 1));
        let word = "x".repeat(n);
        assert_eq!(toks(&word), [word.as_str()]);
        let local = format!("{}@{}", "a.".repeat(n), "b.".repeat(n));
        check_invariants(&local);
    }
}
