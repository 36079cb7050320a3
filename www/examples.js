// Worked examples: scenarios of our own with plausible invented numbers.
// Each carries its run settings and, where a result could hurt someone, the
// caution shown beside it. The first is the page's opening sheet: at first
// sight it shows sliders (its parameters), a threshold time (the alarm), a
// peak, and the accuracy verdict's one line.

const CAUTION_ELECTRICAL = "Electrical work: voltages and currents here are estimates from an idealised circuit. Component ratings, protection and isolation are to be checked against the applicable electrical code by a qualified person.";
const CAUTION_PROCESS = "Process safety: reaction rates vary with temperature, mixing and impurities. Runaway, pressure and toxic-release scenarios need a proper hazard study under your site's process-safety procedures.";

export const EXAMPLES = [
  {
    id: "detention-pond",
    title: "Detention pond in a storm: peak depth and alarm time",
    sheet: `# Storm-water detention pond: a storm fills it, a weir drains it (t in min)
area  = 900              # pond surface, m^2
peak  = 95               # storm inflow at its peak, m^3/min
tpeak = 30               # time of the inflow peak, min
width = 12               # spread of the storm's inflow, min
weir  = 60               # weir rating, m^3/min per m^1.5 of head
crest = 0.3              # weir crest above the pond floor, m
inflow  = peak*exp(-((t - tpeak)/width)^2)    # m^3/min
outflow = weir*max(d - crest, 0)^1.5          # m^3/min
dd/dt = (inflow - outflow)/area               # water depth, m
d(0) = 0.3
mark when d > 1.2        # high-level alarm, m
`,
    settings: { to: 150, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.5, spacing: 5 },
    caution: "Storm water and flooding: pond volumes, spillway capacity and outlet ratings follow your local drainage standards and a qualified engineer's design. This estimate does not replace a flood study.",
  },
  {
    id: "bracket-cooling",
    title: "Cast bracket cooling in shop air",
    sheet: `# Cast aluminium bracket cooling in shop air (lumped, Newton cooling)
T' = -0.0021*(T - 22)    # degC per s
T(0) = 180               # degC straight out of the mould
`,
    settings: { to: 1200, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 1, spacing: 60 },
  },
  {
    id: "tank-draining",
    title: "Settling tank draining through an orifice",
    sheet: `# Settling tank drained through a bottom orifice
A  = 1.5                 # tank cross-section, m^2
a  = 0.004               # orifice area, m^2
Cd = 0.62                # discharge coefficient
g  = 9.81                # m/s^2
q  = Cd*a*sqrt(2*g*max(h, 0))   # outflow, m^3/s
dh/dt = -q/A             # level, m
h(0) = 2
stop when h < 0.05
mark when h < 1
`,
    settings: { to: 600, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 5, spacing: 10 },
    caution: "Draining and filling: confirm vent sizing and the structural rating of the tank before relying on these times; a blocked vent can pull a vacuum.",
  },
  {
    id: "water-heater",
    title: "Process water tank: heat-up, then cool-down",
    sheet: `# Process water tank: the heater runs for the first hour, then trips
V    = 0.8               # water volume, m^3
rho  = 1000              # kg/m^3
cp   = 4186              # J/(kg K)
P    = 12000             # heater power, W
UA   = 45                # heat loss to the room, W/K
Ta   = 18                # room temperature, degC
ton  = 3600              # heater runs until this time, s
heat = P*heaviside(ton - t)   # heater power now, W
dT/dt = (heat - UA*(T - Ta))/(V*rho*cp)
T(0) = 15
mark when T > 25
`,
    settings: { to: 21600, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 30, spacing: 300 },
    caution: "Hot water and heated vessels: temperature and pressure limits, relief valves and scald protection are set by the applicable codes and the equipment's rating, not by this estimate.",
  },
  {
    id: "rc-timer",
    title: "RC timer capacitor charging",
    sheet: `# Timing capacitor charging from a 24 V supply through a resistor
Vs = 24                  # supply, V
R  = 4700                # ohm
C  = 220e-6              # F
i  = (Vs - v)/R          # charging current, A
dv/dt = i/C              # capacitor voltage, V
v(0) = 0
mark when v > 0.632*Vs
mark when v > 20
`,
    settings: { to: 6, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.01, spacing: 0.05 },
    caution: CAUTION_ELECTRICAL,
  },
  {
    id: "rlc-inrush",
    title: "RLC inrush: a 48 V bus switched onto a filter",
    sheet: `# Series RLC: a 48 V bus switched onto a filter capacitor through a choke
Vs = 48                  # V
R  = 0.8                 # choke and wiring resistance, ohm
L  = 2.2e-3              # H
C  = 470e-6              # F
di/dt  = (Vs - R*i - vc)/L
dvc/dt = i/C
i(0)  = 0
vc(0) = 0
mark when vc > 48
`,
    settings: { to: 0.04, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.0001, spacing: 0.0002 },
    caution: CAUTION_ELECTRICAL + " The capacitor voltage overshoots the supply: check it against the capacitor's rating.",
    field: ["vc", "i"],
  },
  {
    id: "batch-series",
    title: "Batch reactor: product formed, then degraded",
    sheet: `# Batch reactor: A turns into the product B, which slowly degrades to C
k1 = 0.12                # A to B, 1/min
k2 = 0.035               # B to C, 1/min
dA/dt = -k1*A            # mol/L
dB/dt = k1*A - k2*B
dC/dt = k2*B
A(0) = 2
B(0) = 0
C(0) = 0
`,
    settings: { to: 120, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.5, spacing: 2 },
    caution: CAUTION_PROCESS,
    field: ["A", "B"],
  },
  {
    id: "stiff-preequilibrium",
    title: "Stiff kinetics: fast pre-equilibrium, slow product",
    sheet: `# Reactant R forms the intermediate I fast and reversibly; I slowly gives product P
kf = 2000                # R to I, 1/s
kr = 1500                # I back to R, 1/s
kp = 0.8                 # I to P, 1/s
dR/dt = -kf*R + kr*I
dI/dt = kf*R - kr*I - kp*I
dP/dt = kp*I
R(0) = 1
I(0) = 0
P(0) = 0
mark when P > 0.5
`,
    settings: { to: 10, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.0005, spacing: 0.1 },
    caution: CAUTION_PROCESS,
    field: ["R", "P"],
  },
  {
    id: "chlorine-dosing",
    title: "Dosing schedule: chlorine in a service reservoir",
    sheet: `# Chlorine dosed into a service reservoir for 20 minutes every 6 hours
V      = 500             # reservoir volume, m^3
Q      = 40              # throughflow, m^3/h
kd     = 0.05            # chlorine decay in the bulk water, 1/h
dose   = 1.2             # dosing rate while the pump runs, kg/h
every  = 6               # hours between doses
length = 0.3333          # dose duration, h
pump   = heaviside(length - (t - every*floor(t/every)))   # 1 while dosing
dc/dt  = pump*dose*1000/V - (Q/V + kd)*c             # mg/L, t in h
c(0) = 0.2
mark when c > 1.2
`,
    settings: { to: 48, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.01, spacing: 0.25 },
    caution: "Dosing: disinfectant residuals and dose limits are set by your drinking-water regulations and the water safety plan. Confirm with measured residuals before changing a dosing schedule.",
  },
  {
    id: "sandbag-drop",
    title: "Motion with drag: sandbag dropped from a platform",
    sheet: `# Sandbag dropped from a lift platform, with quadratic air drag
m   = 12                 # kg
g   = 9.81               # m/s^2
rho = 1.2                # air density, kg/m^3
Cd  = 1.05               # drag coefficient
Af  = 0.09               # frontal area, m^2
H   = 60                 # drop height, m
drag = 0.5*rho*Cd*Af*v*abs(v)/m   # deceleration from drag, m/s^2
dv/dt = g - drag         # speed, m/s (down is positive)
dx/dt = v                # distance fallen, m
v(0) = 0
x(0) = 0
stop when x > H
`,
    settings: { to: 10, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.01, spacing: 0.05 },
    caution: "Dropped objects: exclusion zones, load ratings and lifting plans follow your site's lifting and working-at-height rules, not this estimate.",
    field: ["x", "v"],
  },
  {
    id: "grazers",
    title: "Bacteria and grazers in an aeration basin (phase plane)",
    sheet: `# Bacteria (b) and the protozoa (p) that graze on them, mg/L; t in days
r    = 0.9               # bacterial growth, 1/day
a    = 0.06              # grazing rate, L/(mg day)
conv = 0.25              # fraction of grazed bacteria turned into protozoa
m    = 0.4               # protozoa loss, 1/day
db/dt = r*b - a*b*p
dp/dt = conv*a*b*p - m*p
b(0) = 30
p(0) = 8
`,
    settings: { to: 60, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.05, spacing: 0.5 },
    field: ["b", "p"],
  },
  {
    id: "skid-mounts",
    title: "Pump skid ringing on its isolation mounts",
    sheet: `# Pump skid on rubber isolation mounts, released from a start-up deflection
M = 850                  # skid mass, kg
K = 2.4e6                # mount stiffness, N/m
c = 3200                 # mount damping, N s/m
x'' = -(c*x' + K*x)/M    # deflection, m
x(0)  = 0.004
x'(0) = 0
`,
    settings: { to: 3, method: "auto", tolerance: { relative: 1e-6, absolute: 1e-9 }, step: 0.001, spacing: 0.005 },
    caution: "Structures and machinery: mount loads, fatigue and resonance margins are to be checked by a qualified engineer against the manufacturer's data and the applicable codes.",
    field: ["x", "x'"],
  },
];

/** The example with this id, or undefined. */
export function exampleById(id) {
  return EXAMPLES.find((e) => e.id === id);
}
