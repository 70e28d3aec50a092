//! The page builder: compiles the engine to WebAssembly, generates its JavaScript glue and
//! inlines everything (HTML, CSS, page scripts, the worker with the wasm as base64, the demo
//! table) into one self-contained file, `dist/nervure.html`, that opens from `file://` and
//! makes no request.
//!
//! It is not a bundler: the page's scripts are plain classic scripts, concatenated in the
//! order `www/index.html` lists them. It does not minify.
//!
//! Run: `cargo run --release --features page-builder --bin nervure-build`

use std::env;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, ExitCode};

use base64::Engine as _;

/// The page must stay small enough to send by e-mail and to open instantly. Raised from
/// 2 MB to 3 MB for the .xlsx reader (calamine with its zip, XML and text-encoding crates):
/// about 0.7 MB of wasm, near 1 MB of page once base64-inlined (.ods left out: 83 KB more).
const MAX_PAGE_BYTES: usize = 3 * 1024 * 1024;

type Failure = Box<dyn std::error::Error>;

fn main() -> ExitCode {
    match build() {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("nervure-build: {e}");
            ExitCode::FAILURE
        }
    }
}

fn build() -> Result<(), Failure> {
    // The checkout to build: `cargo run` sets CARGO_MANIFEST_DIR at run time. Never the
    // compile-time value: a cached build of this binary may come from another clone.
    let root = std::env::var_os("CARGO_MANIFEST_DIR").map(PathBuf::from).unwrap_or(std::env::current_dir()?);
    let target_dir = env::var_os("CARGO_TARGET_DIR").map(PathBuf::from).unwrap_or_else(|| root.join("target"));

    // 1. The engine, compiled for the browser.
    let cargo = env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
    eprintln!("nervure-build: compiling the engine for wasm32-unknown-unknown");
    let status = Command::new(cargo)
        .current_dir(&root)
        .env("CARGO_TARGET_DIR", &target_dir)
        .args(["build", "--release", "--lib", "--target", "wasm32-unknown-unknown"])
        .status()
        .map_err(|e| format!("cannot start cargo: {e}"))?;
    if !status.success() {
        return Err(format!("the wasm build failed ({status}); see cargo's messages above").into());
    }
    let wasm_path = target_dir.join("wasm32-unknown-unknown/release/nervure.wasm");

    // 2. Its glue, as a classic script that defines the global `wasm_bindgen`.
    let mut output = wasm_bindgen_cli_support::Bindgen::new()
        .input_path(&wasm_path)
        .no_modules(true)?
        .typescript(false)
        .generate_output()
        .map_err(|e| format!("generating the bindings from {}: {e}", wasm_path.display()))?;
    let glue = output.js().to_string();
    // Function names (the wasm "name" section, about 90 KB) only label stack traces in a
    // debugger; panics are reported with their message and place without them. A profile
    // needs them: NERVURE_WASM_NAMES=1 keeps them (DEVELOPERS.md, "Profiling the page").
    let module = output.wasm_mut();
    if env::var_os("NERVURE_WASM_NAMES").is_none() {
        module.name = None;
        for f in module.funcs.iter_mut() {
            f.name = None;
        }
    }
    let wasm = module.emit_wasm();
    // Gzipped, then base64: the worker inflates it with the browser's DecompressionStream.
    let mut gz = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::best());
    std::io::Write::write_all(&mut gz, &wasm).map_err(|e| format!("compressing the wasm: {e}"))?;
    let wasm_gz = gz.finish().map_err(|e| format!("compressing the wasm: {e}"))?;
    let wasm_b64 = base64::engine::general_purpose::STANDARD.encode(&wasm_gz);

    // 3. One file.
    let www = root.join("www");
    let html = read(&www.join("index.html"))?;
    let style = read(&www.join("style.css"))?;
    let worker_js = read(&www.join("worker.js"))?;

    let worker_source = format!(
        "{glue}\n;\n/* The engine, compiled to WebAssembly, gzipped, as base64. */\nself.NERVURE_WASM_GZIP_BASE64 = \"{wasm_b64}\";\n{worker_js}"
    );

    let scripts_list = marker_argument(&html, "scripts")?;
    let mut page_js = String::from("(function () {\n\"use strict\";\n");
    for name in scripts_list.split_whitespace() {
        page_js.push_str(&format!("/* ---- www/{name} ---- */\n"));
        page_js.push_str(&read(&www.join(name))?);
        page_js.push('\n');
    }
    page_js.push_str("})();\n");

    let demo_path = root.join("demo/river-sensors.csv");
    let demo = if demo_path.exists() {
        let text = read(&demo_path)?;
        Some(text)
    } else {
        eprintln!("nervure-build: {} is absent; the page is built without its demo", demo_path.display());
        None
    };

    let mut page = html.clone();
    page = replace_marker(&page, "style", &format!("<style>\n{}\n</style>", guard("www/style.css", &style, "</style")?))?;
    page = replace_marker(
        &page,
        "worker",
        &format!(
            "<script type=\"text/plain\" id=\"nervure-worker-source\">\n{}\n</script>",
            guard("the worker", &worker_source, "</script")?
        ),
    )?;
    let demo_tag = match &demo {
        Some(text) => format!(
            "<script type=\"text/plain\" id=\"nervure-demo\" data-name=\"river-sensors.csv\">{}</script>",
            guard("demo/river-sensors.csv", text, "</script")?
        ),
        None => String::new(),
    };
    page = replace_marker(&page, "demo", &demo_tag)?;
    page = replace_marker(&page, "scripts", &format!("<script>\n{}</script>", guard("the page scripts", &page_js, "</script")?))?;

    let dist = root.join("dist");
    fs::create_dir_all(&dist).map_err(|e| format!("cannot create {}: {e}", dist.display()))?;
    let out = dist.join("nervure.html");
    fs::write(&out, &page).map_err(|e| format!("cannot write {}: {e}", out.display()))?;

    println!(
        "{}: {} bytes ({:.2} MB; wasm {} bytes, {} gzipped; glue {} bytes, demo {} bytes)",
        out.display(),
        page.len(),
        page.len() as f64 / (1024.0 * 1024.0),
        wasm.len(),
        wasm_gz.len(),
        glue.len(),
        demo.as_ref().map_or(0, |d| d.len())
    );
    if page.len() > MAX_PAGE_BYTES {
        return Err(format!(
            "the page is {} bytes, over the {MAX_PAGE_BYTES}-byte limit; shrink the demo or the engine",
            page.len()
        )
        .into());
    }
    Ok(())
}

fn read(path: &Path) -> Result<String, Failure> {
    fs::read_to_string(path).map_err(|e| format!("cannot read {}: {e}", path.display()).into())
}

/// Text inlined in a tag must not close that tag early.
/// (`<!--` is refused too: inside a script it changes how the browser looks for the end.)
fn guard<'a>(what: &str, text: &'a str, closing: &str) -> Result<&'a str, Failure> {
    let lower = text.to_ascii_lowercase();
    for bad in [closing, "<!--"] {
        if lower.contains(bad) {
            return Err(format!("{what} contains '{bad}', which would upset its tag in the page; remove or escape it").into());
        }
    }
    Ok(text)
}

/// Markers in `www/index.html` look like `<!-- nervure:NAME ARGUMENTS -->` and appear once.
fn find_marker<'a>(html: &'a str, name: &str) -> Result<(usize, usize, &'a str), Failure> {
    let open = format!("<!-- nervure:{name}");
    let mut found = html.match_indices(&open);
    let (start, _) = found.next().ok_or_else(|| format!("www/index.html lacks the marker '{open} -->'"))?;
    if found.next().is_some() {
        return Err(format!("www/index.html has the marker '{open}' more than once").into());
    }
    let rest = &html[start + open.len()..];
    let close = rest.find("-->").ok_or_else(|| format!("www/index.html: marker '{open}' is not closed with '-->'"))?;
    Ok((start, start + open.len() + close + 3, rest[..close].trim()))
}

fn marker_argument<'a>(html: &'a str, name: &str) -> Result<&'a str, Failure> {
    Ok(find_marker(html, name)?.2)
}

fn replace_marker(html: &str, name: &str, with: &str) -> Result<String, Failure> {
    let (start, end, _) = find_marker(html, name)?;
    Ok(format!("{}{}{}", &html[..start], with, &html[end..]))
}
