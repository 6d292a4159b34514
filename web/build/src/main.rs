//! `bandwright-build`: builds the browser app as one self-contained file, `dist/bandwright.html`.
//!
//! Steps, each timed and measured on stdout:
//! 1. `cargo build -p bandwright-web --target wasm32-unknown-unknown --profile web`;
//! 2. wasm-bindgen through the linked `wasm-bindgen-cli-support` library (web target, no
//!    TypeScript, name and producers sections removed), so bindgen is exactly the version the
//!    bindings were compiled against and needs no separate install;
//! 3. `wasm-opt -Oz` from `web/node_modules` (npm `binaryen`, pinned in web/package-lock.json),
//!    skipped when its input and arguments are those of the last run (its output is kept);
//! 4. gzip (zopfli) and base64 of the wasm; the page module and the glue minified by terser from
//!    `web/node_modules` (npm, pinned; `--no-minify` keeps them as written); the page template
//!    filled in by [`page::assemble`];
//! 5. the file is written, its size printed, and the build fails above 1 MB;
//! 6. the file is opened in the default browser when a graphical session has one.
//!
//! Usage: `cargo run -p bandwright-build --release -- [--no-open] [--no-minify] [--out PATH] [--page-dir DIR]`

mod page;

use anyhow::{bail, Context, Result};
use base64::Engine as _;
use std::io::Write as _;
use std::path::{Path, PathBuf};
use std::process::{Command, ExitCode, Stdio};
use std::time::Instant;

/// The largest page the build accepts, in bytes (1 MB).
const MAX_HTML_BYTES: usize = 1_000_000;
/// The binaryen release whose wasm-opt is known to produce working output (Debian's 108 does
/// not: its output exports the wrong table).
const WASM_OPT_VERSION: &str = "version 132";
/// The features rustc's wasm32 target emits, which wasm-opt must be allowed to keep.
const WASM_OPT_FEATURES: &[&str] = &[
    "--enable-bulk-memory",
    "--enable-nontrapping-float-to-int",
    "--enable-sign-ext",
    "--enable-mutable-globals",
    "--enable-reference-types",
    "--enable-multivalue",
];
const WASM_TARGET: &str = "wasm32-unknown-unknown";
/// The terser release the page scripts are minified with (pinned in web/package-lock.json).
const TERSER_VERSION: &str = "terser 5.51.4";
const USAGE: &str =
    "usage: cargo run -p bandwright-build --release -- [--no-open] [--no-minify] [--out PATH] [--page-dir DIR]
  --no-open        do not open the built file in a browser
  --no-minify      insert the page module and the glue as written (for debugging in the browser)
  --out PATH       where to write the page (default: dist/bandwright.html in the workspace)
  --page-dir DIR   folder with index.html, app.js and style.css (default: web/ in the workspace)";

/// Whether to open the result in a browser.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum OpenBrowser {
    Yes,
    No,
}

/// Validated command-line options.
#[derive(Debug, Clone, PartialEq)]
struct BuildOptions {
    open: OpenBrowser,
    minify: bool,
    out: PathBuf,
    page_dir: PathBuf,
}

fn main() -> ExitCode {
    let root = workspace_root();
    let options = match parse_args(std::env::args().skip(1), &root) {
        Ok(Some(options)) => options,
        Ok(None) => {
            println!("{USAGE}");
            return ExitCode::SUCCESS;
        }
        Err(error) => {
            eprintln!("error: {error}\n{USAGE}");
            return ExitCode::from(2);
        }
    };
    match build(&root, &options) {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("error: {error:#}");
            ExitCode::FAILURE
        }
    }
}

/// The workspace root: two levels above this package.
fn workspace_root() -> PathBuf {
    let manifest_dir = Path::new(env!("CARGO_MANIFEST_DIR"));
    let root = manifest_dir.join("..").join("..");
    root.canonicalize().unwrap_or(root)
}

/// Parses the arguments; `Ok(None)` asks for the usage text.
fn parse_args(args: impl IntoIterator<Item = String>, root: &Path) -> Result<Option<BuildOptions>, String> {
    let mut options = BuildOptions {
        open: OpenBrowser::Yes,
        minify: true,
        out: root.join("dist").join("bandwright.html"),
        page_dir: root.join("web"),
    };
    let mut args = args.into_iter();
    while let Some(arg) = args.next() {
        let mut value = |flag: &str| args.next().ok_or_else(|| format!("{flag} needs a path after it"));
        match arg.as_str() {
            "--no-open" => options.open = OpenBrowser::No,
            "--no-minify" => options.minify = false,
            "--out" => options.out = PathBuf::from(value("--out")?),
            "--page-dir" => options.page_dir = PathBuf::from(value("--page-dir")?),
            "-h" | "--help" => return Ok(None),
            other => {
                return Err(format!(
                    "unknown argument {other:?}; accepted are --no-open, --no-minify, --out PATH and --page-dir DIR"
                ))
            }
        }
    }
    Ok(Some(options))
}

fn build(root: &Path, options: &BuildOptions) -> Result<()> {
    let started = Instant::now();
    let work_dir = root.join("target").join("bandwright-web");
    std::fs::create_dir_all(&work_dir).with_context(|| format!("cannot create {}", work_dir.display()))?;

    let page_sources = read_page_sources(&options.page_dir)?;
    let wasm_opt = find_wasm_opt(root)?;
    let terser = if options.minify { Some(find_terser(root)?) } else { None };

    let compiled = compile_wasm(root)?;
    report("wasm from cargo", file_size(&compiled)?);

    let (glue, bindgen_wasm) = run_bindgen(&compiled, &work_dir)?;
    report("wasm after bindgen", file_size(&bindgen_wasm)?);

    let optimised = work_dir.join("bandwright_web.opt.wasm");
    // wasm-opt takes half a minute; when its input and arguments are those of the last run (a
    // change to the page only), its last output is used again.
    let stamp_path = work_dir.join("bandwright_web.opt.input");
    let mut stamp = std::fs::read(&bindgen_wasm).with_context(|| format!("cannot read {}", bindgen_wasm.display()))?;
    stamp.extend_from_slice(format!("\n-Oz {} {WASM_OPT_VERSION}", WASM_OPT_FEATURES.join(" ")).as_bytes());
    let step = Instant::now();
    if optimised.exists() && std::fs::read(&stamp_path).is_ok_and(|previous| previous == stamp) {
        println!("wasm-opt -Oz: skipped, its input is unchanged since the last run");
    } else {
        // No stamp while the output is being written, so an interrupted run is never reused.
        let _ = std::fs::remove_file(&stamp_path);
        let status = Command::new(&wasm_opt)
            .arg("-Oz")
            .args(WASM_OPT_FEATURES)
            .arg(&bindgen_wasm)
            .arg("-o")
            .arg(&optimised)
            .status()
            .with_context(|| format!("cannot run {}", wasm_opt.display()))?;
        if !status.success() {
            bail!("wasm-opt failed ({status})");
        }
        std::fs::write(&stamp_path, &stamp).with_context(|| format!("cannot write {}", stamp_path.display()))?;
        println!("wasm-opt -Oz: {:.1} s", step.elapsed().as_secs_f64());
    }
    let wasm = std::fs::read(&optimised).with_context(|| format!("cannot read {}", optimised.display()))?;
    report("wasm after wasm-opt", wasm.len());

    let gzipped = gzip(&wasm)?;
    report("wasm gzipped", gzipped.len());
    let wasm_gz_base64 = base64::engine::general_purpose::STANDARD.encode(&gzipped);
    report("wasm gzipped, base64", wasm_gz_base64.len());
    report("JS glue", glue.len());

    let step = Instant::now();
    let minify = |source: &str, text: &str| -> Result<String, String> {
        let terser = terser.as_deref().ok_or("no minifier")?;
        run_terser(terser, text).map_err(|error| format!("{error:#} (in {source})"))
    };
    let page = page::assemble(&page::PageSources {
        template: &page_sources.template,
        style: &page_sources.style,
        app: &page_sources.app,
        glue: &glue,
        wasm_gz_base64: &wasm_gz_base64,
        worker: page_sources.worker.as_deref(),
        minify: if options.minify { Some(&minify) } else { None },
    })
    .with_context(|| format!("cannot assemble the page from {}", options.page_dir.display()))?;
    if options.minify {
        println!("page module and glue minified (terser): {:.1} s", step.elapsed().as_secs_f64());
    }
    println!("exports reachable as `bandwright`: {}", page.exports.join(", "));
    if !page_sources.template.contains("Content-Security-Policy") {
        println!("warning: the template has no Content-Security-Policy meta tag");
    }

    if let Some(parent) = options.out.parent() {
        std::fs::create_dir_all(parent).with_context(|| format!("cannot create {}", parent.display()))?;
    }
    std::fs::write(&options.out, &page.html).with_context(|| format!("cannot write {}", options.out.display()))?;
    let size = page.html.len();
    println!(
        "wrote {}: {size} bytes = {:.1} KB (limit {MAX_HTML_BYTES} bytes = 1 MB), built in {:.1} s",
        options.out.display(),
        size as f64 / 1000.0,
        started.elapsed().as_secs_f64()
    );
    if size > MAX_HTML_BYTES {
        bail!("{} is {size} bytes, over the 1 MB limit ({MAX_HTML_BYTES} bytes)", options.out.display());
    }
    if options.open == OpenBrowser::Yes {
        open_in_browser(&options.out);
    }
    Ok(())
}

struct PageFiles {
    template: String,
    style: String,
    app: String,
    /// worker.js, when the page folder has one (the build tool's test page has none).
    worker: Option<String>,
}

fn read_page_sources(page_dir: &Path) -> Result<PageFiles> {
    let read = |name: &str| {
        let path = page_dir.join(name);
        std::fs::read_to_string(&path).with_context(|| {
            format!(
                "cannot read {} (the page folder needs index.html, app.js and style.css; the build tool's own test page is --page-dir web/build/test-page)",
                path.display()
            )
        })
    };
    let worker_path = page_dir.join("worker.js");
    let worker = if worker_path.exists() { Some(read("worker.js")?) } else { None };
    Ok(PageFiles { template: read("index.html")?, app: read("app.js")?, style: read("style.css")?, worker })
}

/// Finds binaryen's wasm-opt installed by `npm ci` in web/ and checks its version.
fn find_wasm_opt(root: &Path) -> Result<PathBuf> {
    let wasm_opt = root.join("web").join("node_modules").join(".bin").join("wasm-opt");
    if !wasm_opt.exists() {
        bail!("{} is missing; run `bash tests/setup.sh` (it runs npm ci in web/)", wasm_opt.display());
    }
    let output = Command::new(&wasm_opt)
        .arg("--version")
        .output()
        .with_context(|| format!("cannot run {} (is node installed?)", wasm_opt.display()))?;
    let version = String::from_utf8_lossy(&output.stdout);
    if !version.contains(WASM_OPT_VERSION) {
        bail!(
            "{} reports {:?}, but the build needs binaryen's wasm-opt {WASM_OPT_VERSION} as pinned in web/package-lock.json; run `bash tests/setup.sh`",
            wasm_opt.display(),
            version.trim()
        );
    }
    Ok(wasm_opt)
}

/// Runs cargo for the bindings crate and returns the path of the compiled wasm.
fn compile_wasm(root: &Path) -> Result<PathBuf> {
    check_wasm_target()?;
    let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    let target_dir = root.join("target");
    let step = Instant::now();
    let status = Command::new(cargo)
        .current_dir(root)
        .args(["build", "-p", "bandwright-web", "--target", WASM_TARGET, "--profile", "web", "--target-dir"])
        .arg(&target_dir)
        .status()
        .context("cannot run cargo")?;
    if !status.success() {
        bail!("cargo build of the wasm bindings failed ({status})");
    }
    println!("cargo build --target {WASM_TARGET} --profile web: {:.1} s", step.elapsed().as_secs_f64());
    Ok(target_dir.join(WASM_TARGET).join("web").join("bandwright_web.wasm"))
}

/// Fails early, with the fix, when rustup is there and the wasm target is not.
fn check_wasm_target() -> Result<()> {
    let Ok(output) = Command::new("rustup").args(["target", "list", "--installed"]).output() else {
        // No rustup: the toolchain came some other way, and cargo will say what is missing.
        return Ok(());
    };
    let installed = String::from_utf8_lossy(&output.stdout);
    if output.status.success() && !installed.lines().any(|line| line.trim() == WASM_TARGET) {
        bail!("the rust target {WASM_TARGET} is not installed; run `bash tests/setup.sh`");
    }
    Ok(())
}

/// Runs wasm-bindgen (web target) and returns the JS glue and the path of the processed wasm.
fn run_bindgen(compiled: &Path, work_dir: &Path) -> Result<(String, PathBuf)> {
    let step = Instant::now();
    let mut bindgen = wasm_bindgen_cli_support::Bindgen::new();
    bindgen
        .input_path(compiled)
        .out_name("bandwright_web")
        .web(true)?
        .typescript(false)
        .remove_name_section(true)
        .remove_producers_section(true);
    let mut output = bindgen.generate_output().context("wasm-bindgen failed")?;
    let snippets: Vec<&String> =
        output.snippets().iter().filter(|(_, texts)| !texts.is_empty()).map(|(name, _)| name).collect();
    let local_modules: Vec<&String> = output.local_modules().keys().collect();
    if !snippets.is_empty() || !local_modules.is_empty() {
        bail!(
            "the bindings use inline JS snippets ({snippets:?}) or local JS modules ({local_modules:?}), which the single-file page cannot load"
        );
    }
    output.emit(work_dir).with_context(|| format!("cannot write the bindgen output to {}", work_dir.display()))?;
    println!("wasm-bindgen (linked library): {:.1} s", step.elapsed().as_secs_f64());
    Ok((output.js().to_string(), work_dir.join("bandwright_web_bg.wasm")))
}

/// Gzip (RFC 1952) with zopfli's exhaustive deflate: standard output that any inflater reads
/// (the page's `DecompressionStream("gzip")`), about 4 % smaller than level 9 on this wasm.
fn gzip(bytes: &[u8]) -> Result<Vec<u8>> {
    let mut out = Vec::new();
    let options = zopfli::Options {
        iteration_count: std::num::NonZeroU64::new(5).expect("5 is not zero"),
        ..zopfli::Options::default()
    };
    zopfli::compress(options, zopfli::Format::Gzip, bytes, &mut out).context("gzip (zopfli) failed")?;
    Ok(out)
}

/// Finds terser installed by `npm ci` in web/ and checks its version.
fn find_terser(root: &Path) -> Result<PathBuf> {
    let terser = root.join("web").join("node_modules").join("terser").join("bin").join("terser");
    if !terser.exists() {
        bail!("{} is missing; run `bash tests/setup.sh` (npm ci in web/), or build with --no-minify", terser.display());
    }
    let output = Command::new("node")
        .arg(&terser)
        .arg("--version")
        .output()
        .with_context(|| format!("cannot run node {} (is Node.js installed?)", terser.display()))?;
    let version = String::from_utf8_lossy(&output.stdout);
    if version.trim() != TERSER_VERSION {
        bail!(
            "{} reports {:?}, but the build pins {TERSER_VERSION} in web/package-lock.json; run `bash tests/setup.sh`",
            terser.display(),
            version.trim()
        );
    }
    Ok(terser)
}

/// Minifies a script (not a module: top-level names stay, so the page's and the glue's names
/// keep working) with terser's default, safe compress and mangle passes; comments go, and
/// non-ASCII characters are written as `\u` escapes (an all-ASCII page decodes faster).
fn run_terser(terser: &Path, text: &str) -> Result<String> {
    let mut child = Command::new("node")
        .arg(terser)
        .args(["--compress", "--mangle", "--comments", "false", "--format", "ascii_only=true"])
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .with_context(|| format!("cannot run node {}", terser.display()))?;
    let mut stdin = child.stdin.take().context("terser's stdin")?;
    let input = text.to_string();
    let writer = std::thread::spawn(move || stdin.write_all(input.as_bytes()));
    let output = child.wait_with_output().context("terser did not finish")?;
    writer.join().map_err(|_| anyhow::anyhow!("writing to terser panicked"))?.context("cannot write to terser")?;
    if !output.status.success() {
        bail!("terser failed: {}", String::from_utf8_lossy(&output.stderr).trim());
    }
    String::from_utf8(output.stdout).context("terser wrote text that is not UTF-8")
}

fn file_size(path: &Path) -> Result<usize> {
    let metadata = std::fs::metadata(path).with_context(|| format!("cannot read {}", path.display()))?;
    Ok(usize::try_from(metadata.len()).unwrap_or(usize::MAX))
}

fn report(what: &str, bytes: usize) {
    println!("{what}: {bytes} bytes = {:.1} KB", bytes as f64 / 1000.0);
}

/// Opens `path` in the default browser when there is a graphical session; never fails.
fn open_in_browser(path: &Path) {
    let opener: Option<(&str, Vec<&str>)> = if cfg!(target_os = "macos") {
        Some(("open", vec![]))
    } else if cfg!(windows) {
        Some(("cmd", vec!["/C", "start", ""]))
    } else if std::env::var_os("DISPLAY").is_some() || std::env::var_os("WAYLAND_DISPLAY").is_some() {
        ["xdg-open", "sensible-browser"].into_iter().find(|name| on_path(name)).map(|name| (name, vec![]))
    } else {
        println!("not opening a browser: no graphical session (DISPLAY and WAYLAND_DISPLAY are unset)");
        return;
    };
    let Some((program, args)) = opener else {
        println!("not opening a browser: neither xdg-open nor sensible-browser is installed");
        return;
    };
    let spawned = Command::new(program)
        .args(args)
        .arg(path)
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn();
    match spawned {
        Ok(_) => println!("opened {} with {program}", path.display()),
        Err(error) => println!("not opening a browser: {program} could not start ({error})"),
    }
}

fn on_path(program: &str) -> bool {
    std::env::var_os("PATH")
        .map(|paths| std::env::split_paths(&paths).any(|dir| dir.join(program).is_file()))
        .unwrap_or(false)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn parse(args: &[&str]) -> Result<Option<BuildOptions>, String> {
        parse_args(args.iter().map(|s| s.to_string()), Path::new("/ws"))
    }

    #[test]
    fn defaults_and_flags() {
        let defaults = parse(&[]).unwrap().unwrap();
        assert_eq!(defaults.open, OpenBrowser::Yes);
        assert_eq!(defaults.out, Path::new("/ws/dist/bandwright.html"));
        assert_eq!(defaults.page_dir, Path::new("/ws/web"));
        assert!(defaults.minify);
        let given = parse(&["--no-open", "--no-minify", "--out", "x/y.html", "--page-dir", "p"]).unwrap().unwrap();
        assert_eq!(
            given,
            BuildOptions { open: OpenBrowser::No, minify: false, out: "x/y.html".into(), page_dir: "p".into() }
        );
        assert_eq!(parse(&["--help"]), Ok(None));
    }

    #[test]
    fn bad_arguments_are_named() {
        assert_eq!(parse(&["--out"]), Err("--out needs a path after it".to_string()));
        let error = parse(&["--open"]).unwrap_err();
        assert!(error.contains("\"--open\"") && error.contains("--no-open"), "{error}");
    }
}
