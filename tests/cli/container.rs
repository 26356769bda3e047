//! Static checks of `docker/Dockerfile` and `.dockerignore` (the development
//! machines have no Docker engine to build the image): the context is an
//! allow-list that keeps build output and data out, every file the build
//! reads is copied in, dependencies sit in their own cached layer, the
//! binary is stripped and the health check runs the binary itself.

use std::path::{Component, Path, PathBuf};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn read(path: &str) -> String {
    std::fs::read_to_string(root().join(path)).unwrap_or_else(|e| panic!("read {path}: {e}"))
}

/// The Dockerfile's instructions, continuation lines joined, comments and
/// the parser directive dropped.
fn instructions() -> Vec<String> {
    let mut out = Vec::new();
    let mut current = String::new();
    for line in read("docker/Dockerfile").lines() {
        let trimmed = line.trim();
        if current.is_empty() && (trimmed.is_empty() || trimmed.starts_with('#')) {
            continue;
        }
        match trimmed.strip_suffix('\\') {
            Some(head) => current.push_str(head),
            None => {
                current.push_str(trimmed);
                out.push(std::mem::take(&mut current));
            }
        }
    }
    out
}

/// The context paths of every `COPY` that reads the build context (not
/// another stage), in order, with the index of the instruction.
fn context_copies() -> Vec<(usize, Vec<String>)> {
    instructions()
        .iter()
        .enumerate()
        .filter_map(|(at, line)| {
            let args: Vec<&str> = line.strip_prefix("COPY ")?.split_whitespace().collect();
            if args.iter().any(|a| a.starts_with("--from")) {
                return None;
            }
            let sources = args.iter().filter(|a| !a.starts_with("--")).copied().collect::<Vec<_>>();
            let (_, sources) = sources.split_last().expect("COPY has a destination");
            Some((at, sources.iter().map(|s| s.trim_start_matches("./").to_string()).collect()))
        })
        .collect()
}

fn position(what: &str) -> usize {
    instructions().iter().position(|l| l.contains(what)).unwrap_or_else(|| panic!("the Dockerfile has no `{what}`"))
}

/// The top-level names `.dockerignore` lets in (`!name` after a leading `*`).
fn allowed_in_context() -> Vec<String> {
    let text = read(".dockerignore");
    let patterns: Vec<&str> = text.lines().map(str::trim).filter(|l| !l.is_empty() && !l.starts_with('#')).collect();
    assert_eq!(patterns.first(), Some(&"*"), ".dockerignore starts by excluding everything");
    patterns.iter().filter_map(|p| p.strip_prefix('!')).map(|p| p.trim_end_matches('/').to_string()).collect()
}

#[test]
fn the_build_context_leaves_out_build_output_data_git_and_node_modules_everywhere() {
    let text = read(".dockerignore");
    for never in ["**/target", "**/fluxbound-data", "**/node_modules", "**/.git"] {
        assert!(text.lines().any(|l| l.trim() == never), ".dockerignore lacks `{never}`");
    }
    for name in allowed_in_context() {
        assert!(!["target", "fluxbound-data", "node_modules", ".git"].contains(&name.as_str()), "{name} is let in");
    }
}

#[test]
fn every_path_the_dockerfile_copies_exists_and_is_in_the_build_context() {
    let allowed = allowed_in_context();
    let copies = context_copies();
    assert!(!copies.is_empty());
    for (_, sources) in copies {
        for source in sources.iter().filter(|s| s.as_str() != ".") {
            assert!(root().join(source).exists(), "COPY {source}: no such path in the repository");
            let top = source.split('/').next().unwrap();
            assert!(allowed.iter().any(|a| a == top), "COPY {source}: .dockerignore keeps it out of the context");
        }
    }
}

/// `include_str!`/`include_bytes!` paths of every `.rs` file under `dir`,
/// resolved against the including file, relative to the repository.
fn included_files(dir: &Path, out: &mut Vec<(PathBuf, PathBuf)>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            included_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            let text = std::fs::read_to_string(&path).unwrap();
            for macro_name in ["include_str!(\"", "include_bytes!(\""] {
                for (at, _) in text.match_indices(macro_name) {
                    let rest = &text[at + macro_name.len()..];
                    let target = &rest[..rest.find('"').unwrap()];
                    out.push((path.clone(), normalise(&path.parent().unwrap().join(target))));
                }
            }
        }
    }
}

fn normalise(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for part in path.components() {
        match part {
            Component::ParentDir => {
                out.pop();
            }
            Component::CurDir => {}
            other => out.push(other),
        }
    }
    out.strip_prefix(root()).map(Path::to_path_buf).unwrap_or(out)
}

#[test]
fn every_file_the_sources_embed_is_copied_into_the_build_stage() {
    let copied: Vec<String> = context_copies().into_iter().flat_map(|(_, s)| s).collect();
    let is_copied = |path: &Path| copied.iter().any(|c| path.starts_with(c));
    let mut embedded = Vec::new();
    included_files(&root().join("src"), &mut embedded);
    included_files(&root().join("crates"), &mut embedded);
    assert!(!embedded.is_empty(), "the scan finds the embedded example sites");
    for (from, file) in embedded {
        assert!(root().join(&file).exists(), "{} embeds {}, which does not exist", from.display(), file.display());
        assert!(is_copied(&file), "{} embeds {}, which the Dockerfile does not copy", from.display(), file.display());
    }
    // build.rs reads the migration folders.
    assert!(is_copied(Path::new("migrations/sqlite")), "the Dockerfile does not copy migrations/");
}

#[test]
fn dependencies_are_built_from_the_recipe_before_any_source_is_copied() {
    let prepare = position("cargo chef prepare");
    let cook = position("cargo chef cook");
    let build = position("cargo build --release");
    let first_source = context_copies()
        .into_iter()
        .filter(|(_, s)| s.iter().any(|p| p == "src"))
        .map(|(at, _)| at)
        .find(|at| *at > prepare)
        .expect("the build stage copies src");
    assert!(cook < first_source && first_source < build, "cook {cook}, sources {first_source}, build {build}");
    let cook_line = &instructions()[cook];
    assert!(cook_line.contains("--release") && cook_line.contains("--locked"), "{cook_line}");
}

#[test]
fn the_image_binary_is_stripped_with_the_same_profile_for_dependencies_and_sources() {
    let strip = position("CARGO_PROFILE_RELEASE_STRIP=symbols");
    assert!(strip < position("cargo chef cook"), "set before the dependency build, or it rebuilds them");
}

#[test]
fn the_health_check_runs_the_binary_against_the_port_the_image_listens_on() {
    let lines = instructions();
    let health: Vec<&String> = lines.iter().filter(|l| l.starts_with("HEALTHCHECK ")).collect();
    assert_eq!(health.len(), 1);
    let expected = r#"CMD ["/usr/local/bin/fluxbound", "health", "--url", "http://127.0.0.1:8080"]"#;
    assert!(health[0].contains(expected), "{}", health[0]);
    assert!(lines.iter().any(|l| l.contains("FLUXBOUND_LISTEN=0.0.0.0:8080")), "the image listens on 8080");
    assert!(lines.iter().any(|l| l == "EXPOSE 8080"));
    assert!(lines.iter().any(|l| l.starts_with("COPY --from=build") && l.ends_with("/usr/local/bin/fluxbound")));
}
