//! Try the formula engine: `cargo run --example formula -- "FORMULA" [NAME]`
//! prints the simplified formula, its LaTeX, and its derivative by NAME, for
//! instance `"rho0 if R < R_in else rho0*(R/R_in)^(-p)" R`. A syntax error
//! (try the old `"if(R < R_in, 1, 2)"`) prints the caret and the fix.

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let Some(text) = args.first() else {
        eprintln!("usage: formula \"FORMULA\" [NAME]");
        std::process::exit(2);
    };
    match stillpoint::formula::parse(text) {
        Err(e) => {
            eprintln!("{}", e.render(text));
            std::process::exit(2);
        }
        Ok(e) => {
            let s = e.simplify();
            println!("simplified  {s}");
            println!("latex       {}", s.to_latex());
            if let Some(name) = args.get(1) {
                let d = e.diff(name);
                println!("d/d{name}      {d}");
                println!("latex       {}", d.to_latex());
            }
        }
    }
}
