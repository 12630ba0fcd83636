use fluxwright_solver::model::{Model, ModelSource};
#[test]
fn print() {
    let dir = std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../tests/models");
    for kind in ["bad", "good"] {
        let mut v: Vec<_> = std::fs::read_dir(dir.join(kind)).unwrap().map(|e| e.unwrap().path()).collect();
        v.sort();
        for p in v {
            let t = std::fs::read_to_string(&p).unwrap();
            let n = p.file_name().unwrap().to_string_lossy().to_string();
            match Model::from_toml_str(&t, &ModelSource::new(n.as_str())) {
                Ok(m) => { println!("OK {n}: {:?}", m.summary().outer); for s in m.summary().shapes { println!("   {:?}", s); } for s in m.summary().materials { println!("   {:?}", s); } }
                Err(e) => println!("{e}"),
            }
        }
    }
    for t in ["[model]\ntitle = \"x\"\nsymmetry = planar\n", "[[shape]]\nrectangle = { min = [0, 0], max = [1, 1] }\n[[shape]]\nrectangle = 5\n[[shape]]\nmaterial = 3\ncircle = { center = [0, 0], radius = 1 }\n", "shape = 3", "[materials]\nx = 3\n[[shape]]\nrectangle = { min = [0, 0], max = [1, 1] }\n", "[[shape]]\nrectangle = { min = [0, 0], max = [1, 1] }\nname = \"a/b\"\n", "[[shape]]\ncircle = { center = [0, 0], radius = 1 }\nrectangle = { min = [0, 0], max = [1, 1] }\n[[edge]]\nfrom=[0,0]\n"] {
        match Model::from_toml_str(t, &ModelSource::new("t.toml")) { Ok(_) => println!("ok"), Err(e) => println!("{e}") }
    }
}
