//! Assembling the single HTML file: the page template with its placeholders filled in.
//!
//! Pure text work, tested without a browser: [`assemble`] takes the template, the CSS, the page
//! module, the wasm-bindgen glue and the packed wasm, checks each for text that would break out
//! of its element, and returns the finished HTML. The placeholders are described in
//! `web/README.md`:
//!
//! - `<!-- bandwright:style -->` (exactly once): becomes `<style>` with the page CSS.
//! - `<!-- bandwright:script -->` (exactly once): becomes the browser-floor check (a classic
//!   script), a non-executing `<script type="text/plain" id="bandwright-wasm">` holding the
//!   packed wasm's text, and one module script holding the glue, the bootstrap and the page
//!   module.
//! - When a worker script is given (web/worker.js), the script placeholder also gets a
//!   non-executing `<script type="text/plain" id="bandwright-worker-source">` holding it. The
//!   page builds a module worker from a Blob of the glue (which it reads back from its own module
//!   script, between [`GLUE_START`] and [`GLUE_END`], so the glue is not in the file twice) and
//!   that text; the CSP then needs `worker-src blob:`. The text/plain element is not run in the
//!   page, so it needs no hash.
//! - `{{bandwright:script-hashes}}` and `{{bandwright:style-hashes}}` (at most once each, meant
//!   for the Content-Security-Policy): become the CSP source expressions (`'sha256-…'`) of the
//!   inserted scripts and style.
//!
//! The template's markup and the CSS are written in ASCII (non-ASCII characters as character
//! references and CSS escapes; the minifier writes the scripts in ASCII too): Chromium decodes an
//! all-ASCII file much faster, and V8 keeps its module source at one byte a character.

use base64::Engine as _;
use sha2::{Digest, Sha256};
use std::fmt;

/// A minifier: the source's name and its text in, the minified text or the minifier's message out.
pub type Minifier<'a> = &'a dyn Fn(&str, &str) -> Result<String, String>;

/// The texts that go into the page.
#[derive(Clone, Copy)]
pub struct PageSources<'a> {
    /// The HTML template with placeholders.
    pub template: &'a str,
    /// The page CSS.
    pub style: &'a str,
    /// The page module (web/app.js); it may not import or export anything.
    pub app: &'a str,
    /// The wasm-bindgen glue (web target).
    pub glue: &'a str,
    /// The optimised wasm, gzipped and then base64-encoded (standard alphabet).
    pub wasm_gz_base64: &'a str,
    /// The Web Worker script (web/worker.js), run after the glue in a module worker; `None` for
    /// a page without workers.
    pub worker: Option<&'a str>,
    /// Minifies a script (given the source's name and its text), or `None` to insert the texts
    /// as they are. It is applied to the page module and to the glue (after its exports are
    /// read and removed), so the CSP hashes and the checks see the final text.
    pub minify: Option<Minifier<'a>>,
}

/// The id of the element that holds the worker's source text.
pub const WORKER_SOURCE_ID: &str = "bandwright-worker-source";
/// The id of the non-running element (`type="text/plain"`) that holds the packed wasm's text.
pub const WASM_SOURCE_ID: &str = "bandwright-wasm";
/// The line before the glue in the module script (the page reads the glue back between the two).
pub const GLUE_START: &str = "// ---- wasm-bindgen glue (bandwright build) ----";
/// The line after the glue in the module script.
pub const GLUE_END: &str = "// ---- end of wasm-bindgen glue ----";

/// The finished page.
#[derive(Debug, Clone, PartialEq)]
pub struct Page {
    /// The whole HTML file.
    pub html: String,
    /// The names the glue exports and the page module reaches through `bandwright`.
    pub exports: Vec<String>,
}

/// Why the page could not be assembled.
#[derive(Debug, Clone, PartialEq)]
pub enum PageError {
    /// The minifier refused a script.
    Minify {
        /// Which text.
        source: &'static str,
        /// The minifier's message.
        message: String,
    },
    /// A placeholder that must appear once appears `count` times.
    Placeholder {
        /// The placeholder text.
        placeholder: &'static str,
        /// How often it was found.
        count: usize,
        /// How often it must appear, as words.
        expected: &'static str,
    },
    /// A `bandwright:` marker that is not one of the known placeholders.
    UnknownPlaceholder {
        /// The marker as found.
        found: String,
    },
    /// A text contains something that would end or confuse its element early.
    Forbidden {
        /// Which text ("the wasm-bindgen glue", "web/app.js", ...).
        source: String,
        /// What was found.
        found: &'static str,
        /// 1-based line of the first occurrence.
        line: usize,
    },
    /// The page module has an import or export statement.
    ModuleStatement {
        /// 1-based line.
        line: usize,
        /// The line's text.
        text: String,
    },
    /// The glue does not look like wasm-bindgen's web output.
    Glue {
        /// What is missing.
        missing: &'static str,
    },
    /// The template lacks `<meta charset="utf-8">`.
    Charset,
}

impl fmt::Display for PageError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Placeholder { placeholder, count, expected } => {
                write!(f, "the template has {placeholder} {count} times; it must have it {expected}")
            }
            Self::UnknownPlaceholder { found } => write!(
                f,
                "the template has the unknown placeholder {found}; known are {STYLE}, {SCRIPT}, {SCRIPT_HASHES} and {STYLE_HASHES}"
            ),
            Self::Forbidden { source, found, line } => write!(
                f,
                "{source} contains {found:?} (line {line}), which would break the inline element it goes into; write it differently (for example split the string)"
            ),
            Self::ModuleStatement { line, text } => write!(
                f,
                "web/app.js line {line} is an import or export statement ({text:?}); the page module imports nothing and reaches the wasm exports through `bandwright` (see web/README.md)"
            ),
            Self::Glue { missing } => {
                write!(f, "the wasm-bindgen glue has no {missing}; is it the web target's output?")
            }
            Self::Minify { source, message } => write!(f, "cannot minify {source}: {message}"),
            Self::Charset => {
                write!(f, "the template must declare <meta charset=\"utf-8\"> (the inline scripts are UTF-8)")
            }
        }
    }
}

impl std::error::Error for PageError {}

/// Replaced by `<style>` with the page CSS.
pub const STYLE: &str = "<!-- bandwright:style -->";
/// Replaced by the floor check and the module script.
pub const SCRIPT: &str = "<!-- bandwright:script -->";
/// Replaced by the CSP hashes of the two inserted scripts.
pub const SCRIPT_HASHES: &str = "{{bandwright:script-hashes}}";
/// Replaced by the CSP hash of the inserted style.
pub const STYLE_HASHES: &str = "{{bandwright:style-hashes}}";

const FEATURE_CHECK: &str = include_str!("feature-check.js");
const BOOTSTRAP: &str = include_str!("bootstrap.js");

/// Builds the HTML file from its sources.
///
/// Line ends in the inserted texts are normalised to `\n`, as the HTML parser does, so that the
/// CSP hashes match what the browser hashes.
///
/// # Errors
/// [`PageError`] naming the placeholder, text or line that is wrong.
pub fn assemble(sources: &PageSources) -> Result<Page, PageError> {
    let template = sources.template;
    if !template.to_ascii_lowercase().contains("<meta charset=\"utf-8\">") {
        return Err(PageError::Charset);
    }
    check_placeholders(template)?;
    let template = ascii_markup(template);

    let glue = normalise_newlines(sources.glue);
    let app = normalise_newlines(sources.app);
    let style = ascii_css(&normalise_newlines(sources.style));
    let exports = glue_exports(&glue)?;
    let glue = plain_glue(&glue)?;
    check_app(&app)?;
    let (glue, app) = match sources.minify {
        Some(minify) => {
            let run = |source: &'static str, text: &str| {
                minify(source, text)
                    .map(|t| normalise_newlines(&t))
                    .map_err(|message| PageError::Minify { source, message })
            };
            (run("the wasm-bindgen glue", &glue)?, run("web/app.js", &app)?)
        }
        None => (glue, app),
    };

    let bootstrap = BOOTSTRAP
        .replace("BANDWRIGHT_EXPORTS", &format!("{{ {} }}", exports.join(", ")))
        .replace("BANDWRIGHT_WASM_ELEMENT_ID", &format!("\"{WASM_SOURCE_ID}\""));
    let module = format!(
        "\n{GLUE_START}\n{glue}\n{GLUE_END}\n{bootstrap}\nif (bandwright !== null) {{\n// ---- web/app.js ----\n{app}\n}}\n",
        glue = glue.trim_end(),
        bootstrap = bootstrap.trim_end(),
        app = app.trim_end(),
    );
    let check = format!("\n{}\n", normalise_newlines(FEATURE_CHECK).trim_end());

    for (source, text) in [("the wasm-bindgen glue", glue.as_str()), ("web/app.js", app.as_str())] {
        check_script_text(source, text)?;
    }
    check_script_text("the inline wasm", sources.wasm_gz_base64)?;
    check_script_text("the assembled module script", &module)?;
    check_style_text(&style)?;
    let style = format!("\n{}\n", style.trim_end());

    let worker_element = match sources.worker {
        Some(worker) => {
            let worker = normalise_newlines(worker);
            check_script_text("web/worker.js", &worker)?;
            let text = format!("\n{}\n", worker.trim_end());
            format!("<script type=\"text/plain\" id=\"{WORKER_SOURCE_ID}\">{text}</script>\n")
        }
        None => String::new(),
    };
    // The packed wasm is an element's text, not a literal in the module: V8 then does not scan it.
    let wasm_element =
        format!("<script type=\"text/plain\" id=\"{WASM_SOURCE_ID}\">{}</script>\n", sources.wasm_gz_base64);
    let scripts =
        format!("{worker_element}<script>{check}</script>\n{wasm_element}<script type=\"module\">{module}</script>");
    let script_hashes = format!("{} {}", csp_hash(&check), csp_hash(&module));
    let html = template
        .replacen(STYLE, &format!("<style>{style}</style>"), 1)
        .replacen(SCRIPT_HASHES, &script_hashes, 1)
        .replacen(STYLE_HASHES, &csp_hash(&style), 1);
    // The script goes in last, so that no placeholder text inside it can be replaced.
    let html = html.replacen(SCRIPT, &scripts, 1);
    Ok(Page { html, exports })
}

/// Returns the names the wasm-bindgen glue exports to the page (functions, classes and
/// constants), leaving out its own `initSync` and default export.
///
/// # Errors
/// [`PageError::Glue`] when the glue has no `initSync` or exports nothing else.
pub fn glue_exports(glue: &str) -> Result<Vec<String>, PageError> {
    if !glue.lines().any(|line| line.trim_start().starts_with("export {") && line.contains("initSync")) {
        return Err(PageError::Glue { missing: "`export { initSync, ... }` line" });
    }
    let mut names = Vec::new();
    for line in glue.lines() {
        let Some(rest) = line.strip_prefix("export ") else { continue };
        let rest = rest.trim_start();
        let declared = ["function ", "class ", "const ", "let ", "var "]
            .iter()
            .find_map(|keyword| rest.strip_prefix(keyword))
            .or_else(|| rest.strip_prefix("async function "));
        let Some(declared) = declared else { continue };
        let name: String =
            declared.trim_start().chars().take_while(|c| c.is_ascii_alphanumeric() || *c == '_' || *c == '$').collect();
        if !name.is_empty() && name != "initSync" && !names.contains(&name) {
            names.push(name);
        }
    }
    if names.is_empty() {
        return Err(PageError::Glue { missing: "exported function or class" });
    }
    Ok(names)
}

/// Returns the glue with its `export` keywords and its closing `export { … }` list removed, so
/// that the same text runs as a classic script (the tolerance workers: module workers from a
/// `blob:` URL do not load in a page opened from `file://`, whose origin is opaque) and inside
/// the page's module script, where the bootstrap names the functions and classes directly.
///
/// # Errors
/// [`PageError::Glue`] when the glue imports something or has an export this does not know.
pub fn plain_glue(glue: &str) -> Result<String, PageError> {
    let mut out = String::with_capacity(glue.len());
    for line in glue.lines() {
        let trimmed = line.trim_start();
        if trimmed.starts_with("import ") || trimmed.starts_with("import{") || trimmed.contains("import.meta") {
            return Err(PageError::Glue { missing: "code free of imports (it has an import)" });
        }
        let kept = if let Some(rest) = line.strip_prefix("export ") {
            let declared = ["function ", "class ", "const ", "let ", "var ", "async function "];
            if declared.iter().any(|keyword| rest.starts_with(keyword)) {
                rest
            } else if rest.starts_with('{') && rest.trim_end().ends_with("};") {
                continue;
            } else {
                return Err(PageError::Glue {
                    missing: "export this build knows (function, class, const or a closing list)",
                });
            }
        } else {
            line
        };
        out.push_str(kept);
        out.push('\n');
    }
    Ok(out)
}

/// Returns the CSP source expression `'sha256-…'` of an inline element's text.
pub fn csp_hash(text: &str) -> String {
    let digest = Sha256::digest(text.as_bytes());
    format!("'sha256-{}'", base64::engine::general_purpose::STANDARD.encode(digest))
}

/// Writes each non-ASCII character as a hexadecimal character reference (`…` as `&#x2026;`).
///
/// References mean the same in text, in attribute values and in `<title>` and `<textarea>`;
/// the template holds no script or style text of its own (the build inserts those).
fn ascii_markup(text: &str) -> String {
    ascii_escaped(text, |c| format!("&#x{c:X};"))
}

/// Writes each non-ASCII character as a CSS escape (`▾` as `\0025BE `).
///
/// Six hex digits and a space: the CSS tokenizer takes one whitespace after an escape as part
/// of it, so the space keeps a following space or hex digit as it was. Escapes mean the same in
/// strings and identifiers, and comments are not read.
fn ascii_css(text: &str) -> String {
    ascii_escaped(text, |c| format!("\\{c:06X} "))
}

/// Copies `text`, writing each non-ASCII character (as its code point) through `escape`.
fn ascii_escaped(text: &str, escape: impl Fn(u32) -> String) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        if c.is_ascii() {
            out.push(c);
        } else {
            out.push_str(&escape(u32::from(c)));
        }
    }
    out
}

fn normalise_newlines(text: &str) -> String {
    text.replace("\r\n", "\n").replace('\r', "\n")
}

fn count(haystack: &str, needle: &str) -> usize {
    haystack.matches(needle).count()
}

fn check_placeholders(template: &str) -> Result<(), PageError> {
    for (placeholder, max, expected) in [
        (STYLE, 1, "exactly once"),
        (SCRIPT, 1, "exactly once"),
        (SCRIPT_HASHES, 1, "at most once"),
        (STYLE_HASHES, 1, "at most once"),
    ] {
        let found = count(template, placeholder);
        let required = expected == "exactly once";
        if found > max || (required && found == 0) {
            return Err(PageError::Placeholder { placeholder, count: found, expected });
        }
    }
    // A misspelt placeholder would silently stay in the page; find every marker and name it.
    for (idx, _) in template.match_indices("bandwright:") {
        let before = &template[..idx];
        let marker = if before.ends_with("{{") {
            let end = template[idx..].find("}}").map_or(template.len(), |e| idx + e + 2);
            &template[idx - 2..end]
        } else if before.trim_end().ends_with("<!--") {
            let start = before.trim_end().len() - 4;
            let end = template[idx..].find("-->").map_or(template.len(), |e| idx + e + 3);
            &template[start..end]
        } else {
            continue;
        };
        if ![STYLE, SCRIPT, SCRIPT_HASHES, STYLE_HASHES].contains(&marker) {
            return Err(PageError::UnknownPlaceholder { found: marker.to_string() });
        }
    }
    Ok(())
}

fn check_app(app: &str) -> Result<(), PageError> {
    for (line_idx, line) in app.lines().enumerate() {
        let trimmed = line.trim_start();
        let statement = ["import ", "import{", "import*", "export ", "export{"].iter().any(|s| trimmed.starts_with(s));
        if statement {
            return Err(PageError::ModuleStatement { line: line_idx + 1, text: trimmed.to_string() });
        }
    }
    Ok(())
}

/// Rejects text that ends a script element early (`</script`) or switches the HTML parser into
/// its escaped states (`<!--`, `<script`), case-insensitively.
fn check_script_text(source: &str, text: &str) -> Result<(), PageError> {
    check_forbidden(source, text, &["</script", "<!--", "<script"])
}

fn check_style_text(text: &str) -> Result<(), PageError> {
    check_forbidden("the page CSS", text, &["</style"])
}

fn check_forbidden(source: &str, text: &str, forbidden: &[&'static str]) -> Result<(), PageError> {
    let lower = text.to_ascii_lowercase();
    for found in forbidden {
        if let Some(idx) = lower.find(found) {
            let line = lower[..idx].matches('\n').count() + 1;
            return Err(PageError::Forbidden { source: source.to_string(), found, line });
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    const TEMPLATE: &str = "<!doctype html><html><head><meta charset=\"utf-8\">\
        <meta http-equiv=\"Content-Security-Policy\" content=\"script-src {{bandwright:script-hashes}}; style-src {{bandwright:style-hashes}}\">\
        <!-- bandwright:style --></head><body><!-- bandwright:script --></body></html>";
    const GLUE: &str = "let wasm;\nexport function version() {\n  return 'x';\n}\nexport class Session {\n}\n\
        function initSync(module) {}\nexport { initSync, __wbg_init as default };\n";

    fn sources<'a>(template: &'a str, app: &'a str, glue: &'a str) -> PageSources<'a> {
        PageSources {
            template,
            style: "body { margin: 0 }",
            app,
            glue,
            wasm_gz_base64: "H4sIAAAA+/=",
            worker: None,
            minify: None,
        }
    }

    fn check_error(template: &str, app: &str, glue: &str, expected: PageError) {
        assert_eq!(assemble(&sources(template, app, glue)), Err(expected));
    }

    /// The text between `open` and the next `close` after it.
    fn element<'a>(html: &'a str, open: &str, close: &str) -> &'a str {
        let start = html.find(open).expect(open) + open.len();
        let end = start + html[start..].find(close).expect(close);
        &html[start..end]
    }

    // Each placeholder the build fills in must stand exactly once in the bootstrap.
    #[test]
    fn the_bootstrap_names_the_wasm_element_and_the_exports_once() {
        assert_eq!(BOOTSTRAP.matches("BANDWRIGHT_WASM_ELEMENT_ID").count(), 1);
        assert_eq!(BOOTSTRAP.matches("BANDWRIGHT_EXPORTS").count(), 1);
    }

    // Chromium decodes an all-ASCII file faster (measured in web/README.md), so the markup and
    // the CSS are written in ASCII; the CSP hash is that of the style as written.
    #[test]
    fn writes_the_markup_and_the_css_in_ascii() {
        let template = TEMPLATE.replace("<body>", "<body><p title=\"2 · 3\">Starting…</p><textarea>Ω</textarea>");
        let style = "select::after { content: \"▾ a\"; } /* µ */";
        let page = assemble(&PageSources { style, ..sources(&template, "", GLUE) }).unwrap();
        assert!(page.html.is_ascii(), "{}", page.html);
        assert!(page.html.contains("<p title=\"2 &#xB7; 3\">Starting&#x2026;</p><textarea>&#x3A9;</textarea>"));
        let css = element(&page.html, "<style>", "</style>");
        // The space after each escape belongs to it, so "\0025BE  a" reads back as "▾ a".
        assert_eq!(css, "\nselect::after { content: \"\\0025BE  a\"; } /* \\0000B5  */\n");
        assert!(page.html.contains(&csp_hash(css)));
    }

    #[test]
    fn fills_every_placeholder_and_hashes_what_it_inserted() {
        let page = assemble(&sources(TEMPLATE, "document.title = bandwright.version();\r\n", GLUE)).unwrap();
        assert_eq!(page.exports, ["version", "Session"]);
        assert!(!page.html.contains("bandwright:"), "{}", page.html);
        let module = element(&page.html, "<script type=\"module\">", "</script>");
        let check = element(&page.html, "<script>", "</script>");
        let style = element(&page.html, "<style>", "</style>");
        assert!(module.contains("Object.freeze({ version, Session })"));
        assert!(module.contains("document.getElementById(\"bandwright-wasm\")"));
        assert!(!module.contains("H4sIAAAA+/="), "the packed wasm is not in the module");
        assert_eq!(
            element(&page.html, "<script type=\"text/plain\" id=\"bandwright-wasm\">", "</script>"),
            "H4sIAAAA+/="
        );
        assert!(module.contains("if (bandwright !== null) {\n// ---- web/app.js ----\ndocument.title"));
        assert!(module.starts_with(&format!("\n{GLUE_START}\nlet wasm;")));
        assert!(!module.contains('\r'));
        assert!(check.contains("WebAssembly.validate"));
        assert_eq!(style, "\nbody { margin: 0 }\n");
        let csp = element(&page.html, "content=\"", "\"");
        assert_eq!(csp, format!("script-src {} {}; style-src {}", csp_hash(check), csp_hash(module), csp_hash(style)));
    }

    #[test]
    fn the_minifier_sees_the_plain_glue_and_the_app_and_the_hashes_cover_its_output() {
        let seen = std::cell::RefCell::new(Vec::new());
        let minify = |source: &str, text: &str| -> Result<String, String> {
            seen.borrow_mut().push((source.to_string(), text.contains("export ")));
            Ok(format!("/*min*/{}", text.replace("    ", "")))
        };
        let page =
            assemble(&PageSources { minify: Some(&minify), ..sources(TEMPLATE, "const shown = 1;", GLUE) }).unwrap();
        let seen = seen.into_inner();
        assert_eq!(seen.len(), 2);
        assert_eq!((seen[0].0.as_str(), seen[0].1), ("the wasm-bindgen glue", false), "exports are gone first");
        assert_eq!(seen[1].0, "web/app.js");
        let module = element(&page.html, "<script type=\"module\">", "</script>");
        assert_eq!(module.matches("/*min*/").count(), 2);
        assert!(page.html.contains(&csp_hash(module)), "the CSP hashes the minified module");
        let failing = |_: &str, _: &str| -> Result<String, String> { Err("Unexpected token".into()) };
        let error = assemble(&PageSources { minify: Some(&failing), ..sources(TEMPLATE, "", GLUE) }).unwrap_err();
        assert_eq!(error.to_string(), "cannot minify the wasm-bindgen glue: Unexpected token");
    }

    #[test]
    fn csp_hash_matches_a_known_digest() {
        // Source: FIPS 180-4 test vector, SHA-256("abc") = ba7816bf…f20015ad; its base64 is the
        // one the CSP Level 3 spec's hash-source expects.
        assert_eq!(csp_hash("abc"), "'sha256-ungWv48Bz+pBQUDeXa4iI7ADYaOWF3qctBD/YfIAFa0='");
    }

    #[test]
    fn hash_placeholders_are_optional() {
        let template = "<meta charset=\"UTF-8\"><!-- bandwright:style --><!-- bandwright:script -->";
        assert!(assemble(&sources(template, "", GLUE)).is_ok());
    }

    #[test]
    fn missing_or_repeated_placeholders_are_named() {
        let no_script = TEMPLATE.replace(SCRIPT, "");
        check_error(
            &no_script,
            "",
            GLUE,
            PageError::Placeholder { placeholder: SCRIPT, count: 0, expected: "exactly once" },
        );
        let two_styles = TEMPLATE.replace(STYLE, &format!("{STYLE}{STYLE}"));
        check_error(
            &two_styles,
            "",
            GLUE,
            PageError::Placeholder { placeholder: STYLE, count: 2, expected: "exactly once" },
        );
        let misspelt = TEMPLATE.replace("{{bandwright:style-hashes}}", "{{bandwright:style-hash}}");
        check_error(&misspelt, "", GLUE, PageError::UnknownPlaceholder { found: "{{bandwright:style-hash}}".into() });
        let misspelt = TEMPLATE.replace(SCRIPT, "<!--bandwright:scripts --><!-- bandwright:script -->");
        check_error(&misspelt, "", GLUE, PageError::UnknownPlaceholder { found: "<!--bandwright:scripts -->".into() });
        // The name in ordinary text is not a placeholder.
        let prose = TEMPLATE.replace("<body>", "<body><p>bandwright: filters</p>");
        assert!(assemble(&sources(&prose, "", GLUE)).is_ok());
        check_error("<!-- bandwright:style --><!-- bandwright:script -->", "", GLUE, PageError::Charset);
    }

    #[test]
    fn text_that_would_leave_its_element_is_refused() {
        let app = "const a = 1;\nconst s = \"</SCRIPT>\";\n";
        check_error(
            TEMPLATE,
            app,
            GLUE,
            PageError::Forbidden { source: "web/app.js".into(), found: "</script", line: 2 },
        );
        let glue = GLUE.replace("let wasm;", "let wasm; // <!--");
        check_error(
            TEMPLATE,
            "",
            &glue,
            PageError::Forbidden { source: "the wasm-bindgen glue".into(), found: "<!--", line: 1 },
        );
        let page = PageSources { style: "a::after { content: '</style>' }", ..sources(TEMPLATE, "", GLUE) };
        assert_eq!(
            assemble(&page),
            Err(PageError::Forbidden { source: "the page CSS".into(), found: "</style", line: 1 })
        );
    }

    #[test]
    fn the_page_module_may_not_import_or_export() {
        let app = "// app\n  import { fit } from './bandwright.js';\n";
        check_error(
            TEMPLATE,
            app,
            GLUE,
            PageError::ModuleStatement { line: 2, text: "import { fit } from './bandwright.js';".into() },
        );
        check_error(
            TEMPLATE,
            "export const x = 1;",
            GLUE,
            PageError::ModuleStatement { line: 1, text: "export const x = 1;".into() },
        );
        // A word that merely starts with "import" is fine.
        assert!(assemble(&sources(TEMPLATE, "const importance = 1;", GLUE)).is_ok());
    }

    #[test]
    fn glue_without_init_sync_is_refused() {
        check_error(
            TEMPLATE,
            "",
            "export function version() {}\n",
            PageError::Glue { missing: "`export { initSync, ... }` line" },
        );
        check_error(TEMPLATE, "", "export { initSync };\n", PageError::Glue { missing: "exported function or class" });
        let importing = format!("import {{ x }} from './x.js';\n{GLUE}");
        check_error(TEMPLATE, "", &importing, PageError::Glue { missing: "code free of imports (it has an import)" });
    }

    #[test]
    fn the_plain_glue_has_no_export_keywords() {
        assert_eq!(
            plain_glue(GLUE).unwrap(),
            "let wasm;\nfunction version() {\n  return 'x';\n}\nclass Session {\n}\nfunction initSync(module) {}\n"
        );
        assert!(plain_glue("export default 5;\n").is_err());
    }

    #[test]
    fn the_worker_source_is_kept_as_text_and_the_glue_is_marked_for_it() {
        let worker = "self.onmessage = () => initSync({});\r\n";
        let page = assemble(&PageSources { worker: Some(worker), ..sources(TEMPLATE, "", GLUE) }).unwrap();
        let text = element(&page.html, "<script type=\"text/plain\" id=\"bandwright-worker-source\">", "</script>");
        assert_eq!(text, "\nself.onmessage = () => initSync({});\n");
        // The glue stands once in the file, between its markers in the module script.
        let module = element(&page.html, "<script type=\"module\">", "</script>");
        let glue = element(module, &format!("{GLUE_START}\n"), &format!("\n{GLUE_END}"));
        assert_eq!(glue, plain_glue(GLUE).unwrap().trim_end());
        assert!(!glue.contains("export"), "{glue}");
        assert_eq!(page.html.matches("function version()").count(), 1);
        // The text element is not one of the hashed (executed) scripts: the CSP names exactly two.
        let csp = element(&page.html, "script-src ", ";");
        assert_eq!(csp.matches("'sha256-").count(), 2);
        assert_eq!(csp, format!("{} {}", csp_hash(element(&page.html, "<script>", "</script>")), csp_hash(module)));
        // Without a worker there is no such element.
        assert!(!assemble(&sources(TEMPLATE, "", GLUE)).unwrap().html.contains(WORKER_SOURCE_ID));
        // Text that would end the element early is refused here too.
        let bad = PageSources { worker: Some("const s = '</script>';"), ..sources(TEMPLATE, "", GLUE) };
        assert_eq!(
            assemble(&bad),
            Err(PageError::Forbidden { source: "web/worker.js".into(), found: "</script", line: 1 })
        );
    }
}
