//! Butcher tableaus of the explicit Runge–Kutta methods, as data.
//!
//! Coefficients that are rational are written as exact fractions with [`q`],
//! which the compiler evaluates to the nearest `f64` (one correctly rounded
//! division of two exactly representable integers). Dormand–Prince 8(5,3) has
//! irrational coefficients (they involve √6); they are stored as the published
//! 30-digit decimals.
//!
//! A method `y_new = y + h Σ b_i k_i` has stages
//! `k_i = f(t + c_i h, y + h Σ_{j<i} a_ij k_j)`. Its continuous extension is
//! `y(t + θh) = y + h Σ_i B_i(θ) k_i` with polynomial weights `B_i(θ)` (see
//! [`Dense`]); the tests check the order conditions of both.

use super::control::StepControl;
use super::stability::StabilityFunction;

/// The exact fraction `n / d`, evaluated at compile time to the nearest `f64`.
pub const fn q(n: i64, d: i64) -> f64 {
    n as f64 / d as f64
}

/// How a method estimates its local error.
#[derive(Debug)]
pub enum ErrorEstimate {
    /// No estimate: a fixed-step method.
    None,
    /// An embedded solution `ŷ = y + h Σ b̂_i k_i`; the estimate is `y_new - ŷ`.
    Embedded {
        /// Weights `b̂_i` of the embedded solution (one per stage).
        b_hat: &'static [f64],
    },
    /// The blended estimate of DOP853 (Hairer, Nørsett & Wanner, *Solving ODEs I*,
    /// 2nd ed., Sec. II.10, and their code `dop853.f`): with weighted RMS norms
    /// `e5 = ‖h Σ e5_i k_i‖` and `e3 = ‖h Σ e3_i k_i‖`, the error is
    /// `e5² / sqrt(e5² + 0.01 e3²)`, which behaves like an order-8 estimate.
    Blended {
        /// Weights of the order-5 difference.
        e5: &'static [f64],
        /// Weights of the order-3 difference.
        e3: &'static [f64],
    },
}

/// The continuous extension (dense output) of a method.
#[derive(Debug)]
pub enum Dense {
    /// Linear interpolation between the step's ends (order 1; Euler).
    Linear,
    /// Cubic Hermite interpolation on `y`, `y_new`, `f(t, y)` and
    /// `f(t + h, y_new)` (order 3). The end slope is the first stage of the next
    /// step, so it costs one evaluation only when the run ends or restarts.
    Hermite,
    /// Polynomial weights `B_i(θ) = Σ_j p[i][j] θ^(j+1)`, one row per stage.
    Weights {
        /// Order of the continuous extension.
        order: u32,
        /// `p[i][j]`: coefficient of `θ^(j+1)` in the weight of stage `i`.
        p: &'static [&'static [f64]],
    },
    /// The order-7 extension of DOP853: three extra stages (`c`, rows of `a`
    /// over all previous stages) and the coefficient rows `d` of the
    /// interpolant in the form of `dop853.f`:
    /// `y(θ) = y + θ(r0 + (1-θ)(r1 + θ(r2 + (1-θ)(r3 + θ(r4 + (1-θ)(r5 + θ r6))))))`
    /// with `r0 = Δy`, `r1 = h k_1 - Δy`, `r2 = 2Δy - h (k_1 + k_end)`,
    /// `r(3+m) = h Σ d[m][i] k_i`.
    Dop853 {
        /// Abscissae of the extra stages.
        c: &'static [f64],
        /// Rows of the extra stages, over every earlier stage.
        a: &'static [&'static [f64]],
        /// The four coefficient rows, over all stages including the extra ones.
        d: &'static [&'static [f64]],
    },
}

/// An explicit Runge–Kutta method as data.
#[derive(Debug)]
pub struct Tableau {
    /// Order of the solution `y_new`.
    pub order: u32,
    /// Abscissae `c_i`.
    pub c: &'static [f64],
    /// Row `i` holds `a_i0 … a_i(i-1)` (row 0 is empty).
    pub a: &'static [&'static [f64]],
    /// Weights `b_i`.
    pub b: &'static [f64],
    /// The local error estimate.
    pub error: ErrorEstimate,
    /// Order of the error estimate (`k` in `err ∝ h^k`) used by the step-size
    /// controller; 0 for fixed-step methods.
    pub error_order: u32,
    /// The continuous extension.
    pub dense: Dense,
    /// The constants of the step-size controller (unused without an error
    /// estimate).
    pub control: StepControl,
    /// Two stages `(i, j)` evaluated at nearby points, for Hairer's stiffness
    /// test `h·ρ ≈ h ‖k_i - k_j‖ / ‖g_i - g_j‖` on the stage arguments `g`.
    pub stiffness_pair: Option<(usize, usize)>,
}

impl Tableau {
    /// Number of stages (the FSAL stage included).
    pub fn stages(&self) -> usize {
        self.c.len()
    }

    /// Order of the continuous extension: the order of its interpolation
    /// formula, but no more than the method's own order.
    pub fn dense_order(&self) -> u32 {
        self.dense.order().min(self.order)
    }

    /// First same as last: the last stage is `f(t + h, y_new)`.
    pub fn fsal(&self) -> bool {
        let s = self.stages();
        s > 1 && self.c[s - 1] == 1.0 && self.a[s - 1].iter().zip(self.b).all(|(x, y)| x == y) && self.b[s - 1] == 0.0
    }

    /// Coefficients `γ_k = b·A^(k-1)·1` of the stability polynomial
    /// `R(z) = 1 + Σ_k γ_k z^k`, for `k = 1..=stages`.
    pub fn stability_polynomial(&self) -> Vec<f64> {
        super::stability::increments(self.a, self.b)
    }

    /// The stability function: the polynomial `1 + Σ_k γ_k z^k`.
    pub fn stability_function(&self) -> StabilityFunction {
        StabilityFunction::from_increments(&self.stability_polynomial())
    }
}

/// Euler's method: order 1, one stage. Stable for `h·λ` in the disc
/// `|1 + z| ≤ 1` (real interval `[-2, 0]`). For teaching and for checking
/// other methods; its error falls only in proportion to `h`.
/// Euler, *Institutionum calculi integralis* (1768); Hairer, Nørsett & Wanner,
/// *Solving ODEs I*, 2nd ed., Sec. II.1.
pub static EULER: Tableau = Tableau {
    order: 1,
    c: &[0.0],
    a: &[&[]],
    b: &[1.0],
    error: ErrorEstimate::None,
    error_order: 0,
    dense: Dense::Linear,
    control: StepControl::GENERAL,
    stiffness_pair: None,
};

/// Heun's method (improved Euler, explicit trapezoid): order 2, two stages.
/// Real stability interval `[-2, 0]`; not stable on the imaginary axis.
/// Hairer, Nørsett & Wanner, *Solving ODEs I*, Sec. II.1, eq. (1.10) (Heun 1900).
pub static HEUN: Tableau = Tableau {
    order: 2,
    c: &[0.0, 1.0],
    a: &[&[], &[1.0]],
    b: &[0.5, 0.5],
    error: ErrorEstimate::None,
    error_order: 0,
    dense: Dense::Hermite,
    control: StepControl::GENERAL,
    stiffness_pair: None,
};

/// The explicit midpoint rule (Runge 1895): order 2, two stages, same
/// stability region as Heun's method. Hairer, Nørsett & Wanner, *Solving ODEs I*,
/// Sec. II.1, eq. (1.9).
pub static MIDPOINT: Tableau = Tableau {
    order: 2,
    c: &[0.0, 0.5],
    a: &[&[], &[0.5]],
    b: &[0.0, 1.0],
    error: ErrorEstimate::None,
    error_order: 0,
    dense: Dense::Hermite,
    control: StepControl::GENERAL,
    stiffness_pair: None,
};

/// The classical Runge–Kutta method (Kutta 1901): order 4, four stages. Real
/// stability interval about `[-2.785, 0]`, imaginary interval `|y| ≤ 2√2`.
/// The workhorse fixed-step method. Hairer, Nørsett & Wanner, *Solving ODEs I*,
/// Sec. II.1, Table 1.2 (left).
pub static RK4: Tableau = Tableau {
    order: 4,
    c: &[0.0, 0.5, 0.5, 1.0],
    a: &[&[], &[0.5], &[0.0, 0.5], &[0.0, 0.0, 1.0]],
    b: &[q(1, 6), q(1, 3), q(1, 3), q(1, 6)],
    error: ErrorEstimate::None,
    error_order: 0,
    dense: Dense::Hermite,
    control: StepControl::GENERAL,
    stiffness_pair: None,
};

/// Bogacki–Shampine 3(2): order 3 with an embedded order-2 solution, four
/// stages with FSAL (three evaluations per step), cubic Hermite dense output.
/// Real stability interval about `[-2.51, 0]`. For loose tolerances (rtol 1e-2
/// to 1e-4) and for non-smooth rates. P. Bogacki, L. F. Shampine, "A 3(2) pair
/// of Runge–Kutta formulas", *Appl. Math. Lett.* 2 (1989) 321–325, Table 1.
pub static BS32: Tableau = Tableau {
    order: 3,
    c: &[0.0, 0.5, 0.75, 1.0],
    a: &[&[], &[0.5], &[0.0, 0.75], &[q(2, 9), q(1, 3), q(4, 9)]],
    b: &[q(2, 9), q(1, 3), q(4, 9), 0.0],
    error: ErrorEstimate::Embedded { b_hat: &[q(7, 24), 0.25, q(1, 3), 0.125] },
    error_order: 3,
    dense: Dense::Hermite,
    // No two stages share an abscissa, so Hairer's stiffness test has no pair:
    // stages 3 and 4 (c = 3/4 and 1) mix ∂f/∂t into the difference, and on
    // y' = −1000 (y − cos t) − sin t their estimate of |h·λ| came out near
    // 0.01 while the steps sat at the stability limit (measured).
    control: StepControl::DOPRI5,
    stiffness_pair: None,
};

/// Dormand–Prince 5(4): order 5 (local extrapolation) with an embedded order-4
/// solution, seven stages with FSAL (six evaluations per step), and Shampine's
/// order-4 continuous extension. Real stability interval about `[-3.31, 0]`.
/// The default for rtol 1e-3 to 1e-8.
/// J. R. Dormand, P. J. Prince, "A family of embedded Runge–Kutta formulae",
/// *J. Comput. Appl. Math.* 6 (1980) 19–26, Table 2 (RK5(4)7M); dense output:
/// L. F. Shampine, "Some practical Runge–Kutta formulas", *Math. Comp.* 46
/// (1986) 135–150; also Hairer, Nørsett & Wanner, *Solving ODEs I*, Table 5.2
/// and Sec. II.6.
pub static DP54: Tableau = Tableau {
    order: 5,
    c: &[0.0, 0.2, 0.3, 0.8, q(8, 9), 1.0, 1.0],
    a: &[
        &[],
        &[0.2],
        &[q(3, 40), q(9, 40)],
        &[q(44, 45), q(-56, 15), q(32, 9)],
        &[q(19372, 6561), q(-25360, 2187), q(64448, 6561), q(-212, 729)],
        &[q(9017, 3168), q(-355, 33), q(46732, 5247), q(49, 176), q(-5103, 18656)],
        &[q(35, 384), 0.0, q(500, 1113), q(125, 192), q(-2187, 6784), q(11, 84)],
    ],
    b: &[q(35, 384), 0.0, q(500, 1113), q(125, 192), q(-2187, 6784), q(11, 84), 0.0],
    error: ErrorEstimate::Embedded {
        b_hat: &[q(5179, 57600), 0.0, q(7571, 16695), q(393, 640), q(-92097, 339200), q(187, 2100), q(1, 40)],
    },
    error_order: 5,
    dense: Dense::Weights {
        order: 4,
        p: &[
            &[1.0, q(-8048581381, 2820520608), q(8663915743, 2820520608), q(-12715105075, 11282082432)],
            &[0.0, 0.0, 0.0, 0.0],
            &[0.0, q(131558114200, 32700410799), q(-68118460800, 10900136933), q(87487479700, 32700410799)],
            &[0.0, q(-1754552775, 470086768), q(14199869525, 1410260304), q(-10690763975, 1880347072)],
            &[0.0, q(127303824393, 49829197408), q(-318862633887, 49829197408), q(701980252875, 199316789632)],
            &[0.0, q(-282668133, 205662961), q(2019193451, 616988883), q(-1453857185, 822651844)],
            &[0.0, q(40617522, 29380423), q(-110615467, 29380423), q(69997945, 29380423)],
        ],
    },
    control: StepControl::DOPRI5,
    stiffness_pair: Some((5, 6)),
};

const DOP853_B: [f64; 13] = [
    5.42937341165687622380535766363e-2,
    0.0,
    0.0,
    0.0,
    0.0,
    4.45031289275240888144113950566,
    1.89151789931450038304281599044,
    -5.8012039600105847814672114227,
    3.1116436695781989440891606237e-1,
    -1.52160949662516078556178806805e-1,
    2.01365400804030348374776537501e-1,
    4.47106157277725905176885569043e-2,
    0.0,
];

/// Order-3 difference of DOP853: `b` minus the order-3 weights `b̂3`.
const DOP853_E3: [f64; 13] = [
    DOP853_B[0] - 0.244094488188976377952755905512,
    0.0,
    0.0,
    0.0,
    0.0,
    DOP853_B[5],
    DOP853_B[6],
    DOP853_B[7],
    DOP853_B[8] - 0.733846688281611857341361741547,
    DOP853_B[9],
    DOP853_B[10],
    DOP853_B[11] - 0.220588235294117647058823529412e-1,
    0.0,
];

/// Dormand–Prince 8(5,3) ("DOP853"): order 8 with an order-5 error estimate
/// corrected by an order-3 one, twelve stages plus the FSAL evaluation
/// `f(t + h, y_new)` (twelve evaluations per step), and an order-7 continuous
/// extension that costs three more evaluations in each step where it is used.
/// Real stability interval about `[-6.0, 0]`. For tight tolerances (rtol 1e-7
/// to 1e-13) and smooth problems. Hairer, Nørsett & Wanner, *Solving ODEs I*,
/// 2nd ed. (1993), Sec. II.10 and the code `dop853.f` published with it,
/// whose coefficients (derived from P. J. Prince, J. R. Dormand, "High order
/// embedded Runge–Kutta formulae", *J. Comput. Appl. Math.* 7 (1981) 67–75)
/// are given there as 30-digit decimals.
pub static DP853: Tableau = Tableau {
    order: 8,
    c: &[
        0.0,
        0.526001519587677318785587544488e-01,
        0.789002279381515978178381316732e-01,
        0.118350341907227396726757197510,
        0.281649658092772603273242802490,
        0.333333333333333333333333333333,
        0.25,
        0.307692307692307692307692307692,
        0.651282051282051282051282051282,
        0.6,
        0.857142857142857142857142857142,
        1.0,
        1.0,
    ],
    a: &[
        &[],
        &[5.26001519587677318785587544488e-2],
        &[1.97250569845378994544595329183e-2, 5.91751709536136983633785987549e-2],
        &[2.95875854768068491816892993775e-2, 0.0, 8.87627564304205475450678981324e-2],
        &[2.41365134159266685502369798665e-1, 0.0, -8.84549479328286085344864962717e-1, 9.24834003261792003115737966543e-1],
        &[3.7037037037037037037037037037e-2, 0.0, 0.0, 1.70828608729473871279604482173e-1, 1.25467687566822425016691814123e-1],
        &[3.7109375e-2, 0.0, 0.0, 1.70252211019544039314978060272e-1, 6.02165389804559606850219397283e-2, -1.7578125e-2],
        &[
            3.70920001185047927108779319836e-2,
            0.0,
            0.0,
            1.70383925712239993810214054705e-1,
            1.07262030446373284651809199168e-1,
            -1.53194377486244017527936158236e-2,
            8.27378916381402288758473766002e-3,
        ],
        &[
            6.24110958716075717114429577812e-1,
            0.0,
            0.0,
            -3.36089262944694129406857109825,
            -8.68219346841726006818189891453e-1,
            2.75920996994467083049415600797e1,
            2.01540675504778934086186788979e1,
            -4.34898841810699588477366255144e1,
        ],
        &[
            4.77662536438264365890433908527e-1,
            0.0,
            0.0,
            -2.48811461997166764192642586468,
            -5.90290826836842996371446475743e-1,
            2.12300514481811942347288949897e1,
            1.52792336328824235832596922938e1,
            -3.32882109689848629194453265587e1,
            -2.03312017085086261358222928593e-2,
        ],
        &[
            -9.3714243008598732571704021658e-1,
            0.0,
            0.0,
            5.18637242884406370830023853209,
            1.09143734899672957818500254654,
            -8.14978701074692612513997267357,
            -1.85200656599969598641566180701e1,
            2.27394870993505042818970056734e1,
            2.49360555267965238987089396762,
            -3.0467644718982195003823669022,
        ],
        &[
            2.27331014751653820792359768449,
            0.0,
            0.0,
            -1.05344954667372501984066689879e1,
            -2.00087205822486249909675718444,
            -1.79589318631187989172765950534e1,
            2.79488845294199600508499808837e1,
            -2.85899827713502369474065508674,
            -8.87285693353062954433549289258,
            1.23605671757943030647266201528e1,
            6.43392746015763530355970484046e-1,
        ],
        &[
            DOP853_B[0], DOP853_B[1], DOP853_B[2], DOP853_B[3], DOP853_B[4], DOP853_B[5], DOP853_B[6], DOP853_B[7],
            DOP853_B[8], DOP853_B[9], DOP853_B[10], DOP853_B[11],
        ],
    ],
    b: &DOP853_B,
    error: ErrorEstimate::Blended {
        e5: &[
            0.1312004499419488073250102996e-1,
            0.0,
            0.0,
            0.0,
            0.0,
            -0.1225156446376204440720569753e+1,
            -0.4957589496572501915214079952,
            0.1664377182454986536961530415e+1,
            -0.3503288487499736816886487290,
            0.3341791187130174790297318841,
            0.8192320648511571246570742613e-1,
            -0.2235530786388629525884427845e-1,
            0.0,
        ],
        e3: &DOP853_E3,
    },
    error_order: 8,
    dense: Dense::Dop853 {
        c: &[0.1, 0.2, 0.777777777777777777777777777778],
        a: &[
            &[
                5.61675022830479523392909219681e-2,
                0.0,
                0.0,
                0.0,
                0.0,
                0.0,
                2.53500210216624811088794765333e-1,
                -2.46239037470802489917441475441e-1,
                -1.24191423263816360469010140626e-1,
                1.5329179827876569731206322685e-1,
                8.20105229563468988491666602057e-3,
                7.56789766054569976138603589584e-3,
                -8.298e-3,
            ],
            &[
                3.18346481635021405060768473261e-2,
                0.0,
                0.0,
                0.0,
                0.0,
                2.83009096723667755288322961402e-2,
                5.35419883074385676223797384372e-2,
                -5.49237485713909884646569340306e-2,
                0.0,
                0.0,
                -1.08347328697249322858509316994e-4,
                3.82571090835658412954920192323e-4,
                -3.40465008687404560802977114492e-4,
                1.41312443674632500278074618366e-1,
            ],
            &[
                -4.28896301583791923408573538692e-1,
                0.0,
                0.0,
                0.0,
                0.0,
                -4.69762141536116384314449447206,
                7.68342119606259904184240953878,
                4.06898981839711007970213554331,
                3.56727187455281109270669543021e-1,
                0.0,
                0.0,
                0.0,
                -1.39902416515901462129418009734e-3,
                2.9475147891527723389556272149,
                -9.15095847217987001081870187138,
            ],
        ],
        d: &[
            &[
                -0.84289382761090128651353491142e+1,
                0.0,
                0.0,
                0.0,
                0.0,
                0.56671495351937776962531783590,
                -0.30689499459498916912797304727e+1,
                0.23846676565120698287728149680e+1,
                0.21170345824450282767155149946e+1,
                -0.87139158377797299206789907490,
                0.22404374302607882758541771650e+1,
                0.63157877876946881815570249290,
                -0.88990336451333310820698117400e-1,
                0.18148505520854727256656404962e+2,
                -0.91946323924783554000451984436e+1,
                -0.44360363875948939664310572000e+1,
            ],
            &[
                0.10427508642579134603413151009e+2,
                0.0,
                0.0,
                0.0,
                0.0,
                0.24228349177525818288430175319e+3,
                0.16520045171727028198505394887e+3,
                -0.37454675472269020279518312152e+3,
                -0.22113666853125306036270938578e+2,
                0.77334326684722638389603898808e+1,
                -0.30674084731089398182061213626e+2,
                -0.93321305264302278729567221706e+1,
                0.15697238121770843886131091075e+2,
                -0.31139403219565177677282850411e+2,
                -0.93529243588444783865713862664e+1,
                0.35816841486394083752465898540e+2,
            ],
            &[
                0.19985053242002433820987653617e+2,
                0.0,
                0.0,
                0.0,
                0.0,
                -0.38703730874935176555105901742e+3,
                -0.18917813819516756882830838328e+3,
                0.52780815920542364900561016686e+3,
                -0.11573902539959630126141871134e+2,
                0.68812326946963000169666922661e+1,
                -0.10006050966910838403183860980e+1,
                0.77771377980534432092869265740,
                -0.27782057523535084065932004339e+1,
                -0.60196695231264120758267380846e+2,
                0.84320405506677161018159903784e+2,
                0.11992291136182789328035130030e+2,
            ],
            &[
                -0.25693933462703749003312586129e+2,
                0.0,
                0.0,
                0.0,
                0.0,
                -0.15418974869023643374053993627e+3,
                -0.23152937917604549567536039109e+3,
                0.35763911791061412378285349910e+3,
                0.93405324183624310003907691704e+2,
                -0.37458323136451633156875139351e+2,
                0.10409964950896230045147246184e+3,
                0.29840293426660503123344363579e+2,
                -0.43533456590011143754432175058e+2,
                0.96324553959188282948394950600e+2,
                -0.39177261675615439165231486172e+2,
                -0.14972683625798562581422125276e+3,
            ],
        ],
    },
    control: StepControl::DOP853,
    stiffness_pair: Some((11, 12)),
};

impl Dense {
    /// The polynomial weights `p[i][j]` (coefficient of `θ^(j+1)` in `B_i(θ)`)
    /// over the method's stages followed by any extra dense stages, and the
    /// rows `(c, a)` of those extra stages. `b` and `fsal` describe the method.
    pub fn weights(&self, b: &[f64], fsal: bool) -> (Vec<Vec<f64>>, Vec<(f64, Vec<f64>)>) {
        let s = b.len();
        match self {
            Dense::Linear => (b.iter().map(|&bi| vec![bi]).collect(), Vec::new()),
            Dense::Hermite => {
                // y(θ) = y + H01(θ)·Δy + h·H10(θ)·k_1 + h·H11(θ)·k_end with
                // H01 = 3θ² - 2θ³, H10 = θ - 2θ² + θ³, H11 = -θ² + θ³.
                let (end, extra) = if fsal { (s - 1, Vec::new()) } else { (s, vec![(1.0, b.to_vec())]) };
                let n = if fsal { s } else { s + 1 };
                let mut p = vec![vec![0.0; 3]; n];
                for (i, &bi) in b.iter().enumerate() {
                    p[i] = vec![0.0, 3.0 * bi, -2.0 * bi];
                }
                p[0][0] += 1.0;
                p[0][1] -= 2.0;
                p[0][2] += 1.0;
                p[end][1] -= 1.0;
                p[end][2] += 1.0;
                (p, extra)
            }
            Dense::Weights { p, .. } => (p.iter().map(|r| r.to_vec()).collect(), Vec::new()),
            Dense::Dop853 { c, a, d } => {
                let n = s + c.len();
                // Each r_m as weights over the n stages (times h).
                let mut r = vec![vec![0.0; n]; 7];
                r[0][..s].copy_from_slice(b);
                for i in 0..n {
                    r[1][i] = -r[0][i];
                    r[2][i] = 2.0 * r[0][i];
                }
                r[1][0] += 1.0;
                r[2][0] -= 1.0;
                r[2][s - 1] -= 1.0; // k_end is the FSAL stage
                for (m, row) in d.iter().enumerate() {
                    r[3 + m][..row.len()].copy_from_slice(row);
                }
                // Expand θ(r0 + (1-θ)(r1 + θ(r2 + (1-θ)(r3 + …)))) from the inside out:
                // add r_m, then multiply by θ (m even) or by 1 - θ (m odd).
                let mut poly: Vec<Vec<f64>> = vec![vec![0.0; n]]; // poly[j][i]: coefficient of θ^j
                for (m, rm) in r.iter().enumerate().rev() {
                    for (x, y) in poly[0].iter_mut().zip(rm) {
                        *x += y;
                    }
                    let mut next = vec![vec![0.0; n]; poly.len() + 1];
                    for (j, pj) in poly.iter().enumerate() {
                        for i in 0..n {
                            if m % 2 == 0 {
                                next[j + 1][i] += pj[i];
                            } else {
                                next[j][i] += pj[i];
                                next[j + 1][i] -= pj[i];
                            }
                        }
                    }
                    poly = next;
                }
                // poly[0] is zero; weights p[i][j-1] = poly[j][i].
                let p = (0..n).map(|i| (1..poly.len()).map(|j| poly[j][i]).collect()).collect();
                let extra = c.iter().zip(a.iter()).map(|(&ci, ai)| (ci, ai.to_vec())).collect();
                (p, extra)
            }
        }
    }

    /// Order of the continuous extension itself (`p*`: its local error is
    /// `O(h^(p*+1))`).
    pub fn order(&self) -> u32 {
        match self {
            Dense::Linear => 1,
            Dense::Hermite => 3,
            Dense::Weights { order, .. } => *order,
            Dense::Dop853 { .. } => 7,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::solve::stability::boundary_radius;

    #[test]
    fn rk4_real_boundary() {
        // RK4's real stability interval ends at about -2.785 (Hairer & Wanner,
        // Solving ODEs II, Sec. IV.2, Fig. 2.1; value from memory).
        let r = boundary_radius(&RK4.stability_polynomial(), std::f64::consts::PI);
        assert!((r - 2.785).abs() < 1e-3, "{r}");
        // Euler: the disc |1 + z| ≤ 1 meets the negative real axis at -2 (analytic).
        let r = boundary_radius(&EULER.stability_polynomial(), std::f64::consts::PI);
        assert!((r - 2.0).abs() < 1e-9, "{r}");
        // Euler is unstable on the imaginary axis (analytic: |1 + iy| > 1).
        assert_eq!(boundary_radius(&EULER.stability_polynomial(), 0.5 * std::f64::consts::PI), 0.0);
    }
}
