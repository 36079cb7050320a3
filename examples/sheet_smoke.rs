use ratebook::problem::Problem;
fn main() {
    let text = "# tank\nA  = 1.5\na  = 0.004\ng  = 9.81\nq  = a*sqrt(2*g*h)\ndh/dt = -q/A\nh(0) = 2\nstop when h < 0.05\nmark when h < 1\n";
    let mut m = ratebook::sheet::compile(text).unwrap();
    let mut dy = [0.0];
    m.rhs(0.0, &[2.0], &mut dy);
    println!("{dy:?} expected {}", -0.004/1.5*(2.0f64*9.81*2.0).sqrt());
    println!("{:?}", m.rhs_program().insts());
    let mut j = [0.0]; m.jacobian(0.0, &[2.0], &mut j); println!("jac {j:?}");
    println!("{:?} {:?} {:?}", m.params(), m.initial_state(), m.events());
    for bad in ["", "x' = 2x\nx(0)=1", "x' = -y\nx(0)=1", "x' = sin(x,2)\nx(0)=1", "x' = (x\nx(0)=1", "x' = x)\nx(0)=1", "x' = −x\nx(0)=1", "a = b\nb = a\nx'=a\nx(0)=1", "x' = x\n", "dx/dt = 1\ndy/ds = 2\nx(0)=1\ny(0)=1", "x' = 1.2.3", "x' = xx\nx(0)=1"] {
        match ratebook::sheet::compile(bad) { Err(e) => println!("{:?} -> {}", bad, e), Ok(_) => println!("{bad:?} OK?!") }
    }
}
