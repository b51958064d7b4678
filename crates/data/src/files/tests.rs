use super::*;

fn tree(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("crescendo-files-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(d.join("story/data")).unwrap();
    std::fs::create_dir_all(d.join("private")).unwrap();
    std::fs::write(d.join("story/data/a.csv"), "x\n1\n").unwrap();
    std::fs::write(d.join("private/secret.csv"), "x\n2\n").unwrap();
    d
}

#[test]
fn the_opened_file_is_checked_not_the_path() {
    let d = tree("open");
    let within = Within::folders([d.join("story")]);
    let mut text = String::new();
    within
        .open(&d.join("story/data/a.csv"))
        .unwrap()
        .read_to_string(&mut text)
        .unwrap();
    assert_eq!(text, "x\n1\n");
    // a link that points out, to a file or through a folder
    std::os::unix::fs::symlink(d.join("private/secret.csv"), d.join("story/data/l.csv")).unwrap();
    std::os::unix::fs::symlink(d.join("private"), d.join("story/data/dir")).unwrap();
    for p in [
        "story/data/l.csv",
        "story/data/dir/secret.csv",
        "story/../private/secret.csv",
    ] {
        match within.open(&d.join(p)) {
            Err(OpenError::Outside { real }) => {
                assert!(real.ends_with("private/secret.csv"), "{p}: {real:?}")
            }
            other => panic!("{p}: {other:?}"),
        }
    }
    // a link that stays inside is fine; anywhere allows the outside
    std::os::unix::fs::symlink(d.join("story/data/a.csv"), d.join("story/data/in.csv")).unwrap();
    assert!(within.open(&d.join("story/data/in.csv")).is_ok());
    assert!(Within::anywhere().open(&d.join("story/data/l.csv")).is_ok());
    assert!(matches!(
        within.open(&d.join("story/data/none.csv")),
        Err(OpenError::Io(_))
    ));
    let _ = std::fs::remove_dir_all(&d);
}

#[test]
fn positional_reads_share_one_descriptor() {
    let d = tree("at");
    let f = File::open(d.join("story/data/a.csv")).unwrap();
    let mut a = String::new();
    let mut b = String::new();
    ReadAt::new(&f, 2).read_to_string(&mut a).unwrap();
    ReadAt::new(&f, 0).read_to_string(&mut b).unwrap();
    assert_eq!((a.as_str(), b.as_str()), ("1\n", "x\n1\n"));
    let _ = std::fs::remove_dir_all(&d);
}
