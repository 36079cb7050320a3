//! The cases of the user-path benchmark (`scripts/bench.d/user`) as JSON:
//! every problem of the non-stiff and stiff benchmarks written as a sheet
//! (`ratebook::problems::bench::sheet`) with the settings a user passes to
//! `solve()`, and the 20-line sheet that times the fixed cost of one call.

use ratebook::problems::{bench, by_name, nonstiff, stiff};
use serde_json::json;

/// Two rooms warmed by one radiator loop under a day's outdoor swing (our
/// own scenario, invented numbers): 20 lines with helpers, a switch and an
/// event, as a sheet typed on the page.
const TWENTY_LINES: &str = "# Two rooms warmed by one radiator loop
Ua = 120        # W/K, room A to outdoors
Ub = 90         # W/K, room B to outdoors
Uab = 60        # W/K, between the rooms
Ca = 2.4e6      # J/K
Cb = 1.8e6      # J/K
Cw = 4.2e5      # J/K, the loop's water
P = 3000        # W, boiler power while room A is below 20
k = 250         # W/K, radiator to room A
Tout = 4 + 3*sin(2*pi*t/86400)
qa = k*(Tw - Ta)
qab = Uab*(Ta - Tb)
Ta' = (qa - Ua*(Ta - Tout) - qab)/Ca
Tb' = (qab - Ub*(Tb - Tout))/Cb
Tw' = (P*heaviside(20 - Ta) - qa)/Cw
Ta(0) = 15
Tb(0) = 14
Tw(0) = 40
mark when Ta > 20
# end of sheet
";

fn main() {
    let mut cases = Vec::new();
    let mut push = |c: bench::BenchCase, methods: &[&str]| {
        if !methods.contains(&c.method) {
            return;
        }
        let p = by_name(c.problem).expect("a bench problem");
        let sheet = bench::sheet(c.problem).expect("every bench problem has a sheet");
        cases.push(json!({
            "problem": c.problem, "method": c.method, "rtol": c.rtol, "atol": c.atol, "to": p.t_end,
            "stiff": p.stiff, "sheet": sheet,
        }));
    };
    for c in nonstiff::bench_cases() {
        push(c, &["dormand-prince-5", "dormand-prince-8"]);
    }
    for c in stiff::bench_cases() {
        if [1e-4, 1e-6, 1e-8].iter().any(|r| (c.rtol / r - 1.0).abs() < 1e-9) {
            push(c, &["auto", "radau-iia-5"]);
        }
    }
    assert_eq!(TWENTY_LINES.lines().count(), 20);
    println!("{}", json!({ "cases": cases, "twentyLines": TWENTY_LINES, "twentyLinesTo": 600.0 }));
}
