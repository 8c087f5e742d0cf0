//! The output folder's set swap, with the crashes it must survive simulated:
//! a run that dies before its commit (its `Folder` is leaked, so nothing of
//! its clean-up runs, as under SIGKILL), a target that cannot be replaced,
//! and folders of the maker's own that rule out the one-rename swap.

use std::fs;
use std::path::Path;

use glowscore::folder::{Folder, FolderError, LOCK_FILE, MANIFEST_FILE, STAGING_MARK, Swap};

use crate::common;

fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

/// Writes `files` (name, text) into a fresh locked folder's staging and
/// commits them.
fn compile_set(dir: &Path, files: &[(&str, &str)]) -> Swap {
    let folder = Folder::open(dir).unwrap();
    for (name, text) in files {
        fs::write(folder.staging().join(name), text).unwrap();
    }
    let list: Vec<String> = files.iter().map(|(n, _)| n.to_string()).collect();
    folder.commit(&list).unwrap()
}

#[test]
fn a_commit_swaps_the_whole_set_in_one_step() {
    let root = common::scratch("folder", "swap");
    let out = root.join("out");
    compile_set(&out, &[("a.csv", "old a"), ("b.csv", "old b")]);
    fs::write(out.join("notes.txt"), "mine").unwrap();
    let swap = compile_set(&out, &[("a.csv", "new a"), ("c.csv", "new c")]);
    if cfg!(target_os = "linux") {
        assert_eq!(swap, Swap::Exchange);
    }
    assert_eq!(
        names(&out),
        [MANIFEST_FILE, LOCK_FILE, "a.csv", "c.csv", "notes.txt"]
    );
    assert_eq!(fs::read_to_string(out.join("a.csv")).unwrap(), "new a");
    assert_eq!(fs::read_to_string(out.join("notes.txt")).unwrap(), "mine");
    assert_eq!(
        fs::read_to_string(out.join(MANIFEST_FILE)).unwrap(),
        "a.csv\nc.csv\n"
    );
    // Nothing is left beside the folder.
    assert_eq!(names(&root), ["out"]);
    // The lock is the same file before and after the swap: a second
    // compile is still refused while one holds it.
    let held = Folder::open(&out).unwrap();
    assert!(matches!(Folder::open(&out), Err(FolderError::Busy { .. })));
    drop(held);
}

/// The dying run, as a child process: it opens the folder named by
/// `GLOWSCORE_DYING_RUN`, writes into staging and aborts before its commit
/// (no destructor runs, as under SIGKILL). Ignored, and a no-op without
/// the variable, so that it runs only as the child of the test below.
#[test]
#[ignore]
fn dying_run_child() {
    let Some(out) = std::env::var_os("GLOWSCORE_DYING_RUN") else {
        return;
    };
    let folder = Folder::open(Path::new(&out)).unwrap();
    fs::write(folder.staging().join("a.csv"), "half").unwrap();
    std::process::abort();
}

#[test]
fn a_run_that_dies_before_its_commit_leaves_the_old_set() {
    let root = common::scratch("folder", "killed");
    let out = root.join("out");
    compile_set(&out, &[("a.csv", "old a"), ("b.csv", "old b")]);
    let before = names(&out);
    let child = std::process::Command::new(std::env::current_exe().unwrap())
        .args([
            "--exact",
            "folder::dying_run_child",
            "--ignored",
            "--nocapture",
        ])
        .env("GLOWSCORE_DYING_RUN", &out)
        .output()
        .unwrap();
    assert!(!child.status.success(), "the child must die");
    assert_eq!(names(&out), before);
    assert_eq!(fs::read_to_string(out.join("a.csv")).unwrap(), "old a");
    // Its staging folder is left beside the folder ...
    let staged = |root: &Path| {
        names(root)
            .into_iter()
            .filter(|n| n.contains(STAGING_MARK))
            .count()
    };
    assert_eq!(staged(&root) + staged(&out), 1, "{:?}", names(&root));
    // ... the dead run's lock went with it, and the next run removes it.
    compile_set(&out, &[("a.csv", "new a")]);
    assert_eq!(staged(&root) + staged(&out), 0, "{:?}", names(&root));
    assert_eq!(names(&out), [MANIFEST_FILE, LOCK_FILE, "a.csv"]);
}

#[test]
fn a_target_taken_by_a_folder_refuses_before_anything_moves() {
    let root = common::scratch("folder", "in-the-way");
    let out = root.join("out");
    compile_set(&out, &[("a.csv", "old a"), ("b.csv", "old b")]);
    fs::remove_file(out.join("b.csv")).unwrap();
    fs::create_dir(out.join("b.csv")).unwrap();
    let folder = Folder::open(&out).unwrap();
    fs::write(folder.staging().join("a.csv"), "new a").unwrap();
    fs::write(folder.staging().join("b.csv"), "new b").unwrap();
    let err = folder
        .commit(&["a.csv".to_string(), "b.csv".to_string()])
        .unwrap_err();
    assert!(matches!(err, FolderError::InTheWay { .. }), "{err}");
    assert!(err.to_string().contains("nothing was changed"), "{err}");
    drop(folder);
    assert_eq!(fs::read_to_string(out.join("a.csv")).unwrap(), "old a");
    assert!(out.join("b.csv").is_dir());
    assert_eq!(names(&root), ["out"]);
}

#[test]
fn a_folder_of_the_makers_own_is_kept_and_the_set_moves_file_by_file() {
    let root = common::scratch("folder", "own-folder");
    let out = root.join("out");
    compile_set(&out, &[("a.csv", "old a"), ("b.csv", "old b")]);
    fs::create_dir(out.join("photos")).unwrap();
    fs::write(out.join("photos").join("1.jpg"), "jpeg").unwrap();
    let swap = compile_set(&out, &[("a.csv", "new a")]);
    assert_eq!(swap, Swap::FileByFile);
    assert_eq!(names(&out), [MANIFEST_FILE, LOCK_FILE, "a.csv", "photos"]);
    assert_eq!(fs::read_to_string(out.join("a.csv")).unwrap(), "new a");
    assert_eq!(
        fs::read_to_string(out.join("photos").join("1.jpg")).unwrap(),
        "jpeg"
    );
    assert_eq!(names(&root), ["out"]);
}

#[test]
fn an_interrupt_removes_the_staging_folder() {
    let root = common::scratch("folder", "interrupt");
    let out = root.join("out");
    let folder = Folder::open(&out).unwrap();
    fs::write(folder.staging().join("a.csv"), "partial").unwrap();
    assert!(folder.staging().exists());
    glowscore::folder::abandon_staging();
    assert!(!folder.staging().exists());
    drop(folder);
    assert_eq!(names(&root), ["out"]);
}
