package config

// HelpText documents the run configuration, for "mirabilis help config". It
// ends with Example, a complete configuration with every setting commented.
const HelpText = `A run configuration is a TOML file (https://toml.io) that describes one fit:
the catalog of sources, the rotation curve, the prior of every parameter, the
spiral arms, and the settings of the likelihood and of the sampler.

Units: kpc, km/s and degrees. Azimuths β are Galactocentric, 0 on the line from
the centre through the Sun, increasing in the direction of Galactic rotation.

Every key is checked: a misspelt key, an impossible prior, a duplicate arm or
an unknown choice stops the run with a message naming the key and its line,
and all such problems are listed at once. Paths are taken relative to the
folder of the configuration file. Every setting that is left out takes the
default given below; a run records the complete, resolved configuration (every
default written out, every path absolute) in its run directory, and that file
can be used again as a configuration.

PRIORS
  A prior is written as a short expression in a string:
    "uniform(a, b)"                 flat on [a, b]
    "normal(mu, sigma)"             Gaussian
    "truncnormal(mu, sigma, a, b)"  Gaussian restricted to [a, b]
    "loguniform(a, b)"              flat in ln x on [a, b], 0 < a < b
    "fixed(v)"                      held at v, not sampled
  A bare number (width_slope = 0) is the same as fixed(v). The median of each
  prior (the midpoint of a uniform one) is the default starting value.

TOP LEVEL
  catalog           the source catalog (CSV). Required.
  output            the run directory. Default "run-<name of this file>".

[rotation]
  curve             "linear": Θ(R) = Θ0 + dΘ/dR (R − R0);
                    "power":  Θ(R) = Θ0 (R/R0)^α;
                    "nodes":  free speeds Theta_1 … Theta_N at node_radii,
                    interpolated, flat beyond the first and last node; Θ0 is
                    then derived. Default "linear".
  core_radius       R_core, kpc: every curve rises as a solid body inside it.
                    Default 2.
  node_radii        kpc, strictly increasing, at least two, none inside
                    core_radius. Nodes curve only; required there.
  interpolation     "monotone" (piecewise cubic without overshoot) or
                    "linear". Nodes curve only. Default "monotone".

[params]
  One prior per global parameter. Parameters left out get broad defaults:
    R0          kpc        uniform(6, 11)
    Theta0      km/s       uniform(150, 320)    linear and power curves
    dTheta_dR   km/s/kpc   uniform(-10, 10)     linear curve
    alpha                  uniform(-0.5, 0.5)   power curve
    Theta_j     km/s       uniform(100, 350)    nodes curve, j = 1 … N
    Usun        km/s       uniform(-10, 30)     Sun, toward the centre
    Vsun        km/s       uniform(-20, 40)     Sun, along rotation (beyond Θ0)
    Wsun        km/s       uniform(-5, 20)      Sun, toward the north pole
    Us, Vs, Ws  km/s       uniform(-30, 30)     mean motion of the sources
    sigma_vir   km/s       uniform(0, 40)       scatter of each source
    width_slope kpc/kpc    fixed(0)             growth of arm widths with R
    scale_height           kpc, loguniform(0.005, 0.3): scale height of
                           the sources' Gaussian layer about the mid-plane
    z_sun                  kpc, fixed(0): the Sun's height above that
                           mid-plane
  scale_height and z_sun exist only with vertical = "gaussian" under
  [likelihood] and distance_prior = "galaxy".
  Theta0, Vsun and Vs are nearly degenerate under flat priors: a prior on Vs,
  or on Omega_sun under [derived_priors], settles them.

[derived_priors]
  Optional priors on derived quantities (not fixed values): Omega_sun
  (km/s/kpc, (Theta0 + Vsun)/R0), Theta0_over_R0 (km/s/kpc),
  Theta0_plus_Vsun (km/s), Oort_A and Oort_B (km/s/kpc), NAME_Rsun (kpc,
  where arm NAME crosses the Sun–centre line) and, for the nodes curve,
  Theta0 (km/s). Such a prior multiplies the priors of the parameters the
  quantity depends on: with Omega_sun = normal(29.65, 0.4), the effective
  prior of R0, Theta0 and Vsun is no longer the one written for each under
  [params], and summaries list the stated priors as stated, not effective.

[[arm]]  (one table per arm; none is allowed)
  name              letters, digits and underscores, starting with a letter;
                    unique. Parameters are named NAME_Rref, NAME_pitch,
                    NAME_pitch2, NAME_kink, NAME_width and the fraction f_NAME.
  ref_azimuth       β_ref, deg: where the arm's radius is R_ref. Default 0.
  azimuth_range     [β_start, β_end], deg, start below end: where the arm
                    exists. It may span more than 360°. Required.
  radius            prior of R_ref, kpc. Required.
  pitch             prior of the pitch angle ψ, deg (ψ1 below a kink);
                    positive when the arm winds inward as β grows. Required.
  width             prior of the arm's width at R0, kpc.
                    Default "loguniform(0.05, 1.5)".
  kink, pitch2      priors of β_kink (deg) and of the pitch ψ2 beyond it;
                    give both to kink the arm, or neither.

[membership]
  field_scale       h, kpc: scale length of the field's exponential disk.
                    Default 3.
  concentration     α of the symmetric Dirichlet prior on the membership
                    fractions f_field, f_NAME …; 1 is flat. Default 1.
  arm_end_softening τ, deg: the arm's density fades over this azimuth at
                    its ends. Default 3.

[likelihood]
  error_model       "gaussian", "tolerant" (a heavy-tailed form that keeps
                    one wild source from dragging the fit) or "student".
                    Default "gaussian".
  student_dof       ν of the Student-t model. Default 4.
  distance_prior    "galaxy": distances follow the model galaxy (arms and
                    field), which is fitted with the rest; "parallax": flat
                    in distance over distance_range, for fits of the
                    rotation alone, with every arm parameter fixed.
                    Default "galaxy".
  vertical          "gaussian": the sources lie in a layer about the
                    Galactic plane, Gaussian in height z = d sin b + z_sun
                    with scale height scale_height, so a source's latitude
                    bounds its distance (a source at |b| = 1° cannot lie
                    much beyond a few scale heights / sin 1°);
                    "none": every source in the plane, latitudes used only
                    in the projection d cos b, no height parameters (for
                    catalogs without reliable latitudes, and to compare).
                    Applies with distance_prior = "galaxy". Default
                    "gaussian".
  distance_range    [d_min, d_max], kpc, of the distance integral.
                    Default [0.05, 30].
  tolerance         accuracy of each source's distance integral, in ln L.
                    Default 1e-4.
  inner_radius      R_inner, kpc: sources mostly inside are flagged, and the
                    bar's extra scatter switches on there. Default 4.
  exclude_inner     leave the flagged inner sources out. Default false.
  bar_dispersion    σ_bar, km/s: extra scatter inside R_inner. Default 40.
  bar_softening     s_bar, kpc: width of that switch. Default 0.5.
  pilot_start       starting values by parameter name, for example
                    { R0 = 8.25 }: the first pilot parameter set and the
                    optimiser's start. Default: each prior's median.
  pilot_spread      expected posterior spreads (standard deviations) by
                    parameter name, for the pilot draws around the best
                    point. Default: each prior's standard deviation.

[selection]  (optional; without it the survey is taken to see everything)
  Which sources the survey could have found, known and not fitted. Each
  key is optional; the terms multiply. The model divides each source's
  density by the share of the Galaxy the survey sees, so the fractions are
  the Galaxy's, not the catalog's. Needs distance_prior = "galaxy". Every
  catalog source must lie where the selection sees: one outside is an error.
  A cut on measured quantities (say on parallax / its error) is a different
  matter and is not supported.
  declination       [lower, upper], deg, ICRS: the band of declination the
                    survey sees.
  exclude_longitude [[from, to], ...], deg, Galactic longitude: ranges left
                    out; from > to wraps through 0 ([350, 10] leaves out
                    the 20° about l = 0).
  completeness      { half_distance = D, softness = s }, kpc: the share of
                    sources found falls with distance d as
                    1 / (1 + exp((d − D) / s)), one half at D.

[sampler]
  walkers           even, at least 2·D + 2 for D sampled dimensions (the
                    free parameters, plus one fewer than the number of
                    fractions). Default max(2·D + 2, 32).
  steps             total chain length; 0 lets the run stop on its own once
                    every parameter has an effective sample size of
                    min_ess after burn-in, the chain is longer than 20
                    autocorrelation times and those have settled. Default 0.
  max_steps         the longest a run that stops on its own may go.
                    Default 20000.
  burn              initial steps left out of summaries, during which the
                    slice moves tune their interval widths and the move
                    weights adapt (both frozen afterwards). Default steps/4;
                    with steps = 0, 0 means a quarter of the final length,
                    and the tuning takes max_steps/10 steps.
  seed              seed of the random streams; the same seed gives the same
                    chain whatever the number of threads. Default 1.
  threads           0 uses every core. Default 0.
  checkpoint_every  steps between checkpoints; 0 writes one at the end only.
                    Default 200.
  moves             relative weights of the proposal moves: stretch and walk
                    (Goodman & Weare 2010), differential_evolution (ter Braak
                    2006), the ensemble slice moves differential_slice
                    and gaussian_slice (Karamanis & Beutler 2021), which
                    cost a varying number of likelihood evaluations per
                    step, and independence, whose proposal is drawn,
                    wherever the walker stands, from a Student t (5 degrees
                    of freedom) centred on the mean of the other half of
                    the ensemble, with that half's covariance as its scale
                    matrix (independence Metropolis-Hastings, Tierney
                    1994). Default { stretch = 0.2,
                    differential_evolution = 0.8 }: see below.
  adapt_weights     true lets the weights adapt during burn-in, so that
                    each move's share of the likelihood evaluations is in
                    proportion to its squared jump per evaluation; they are
                    frozen after burn-in and reported in summary.txt and
                    summary.json. false keeps the weights given.
                    Default false: see below.
  min_ess           with steps = 0, the effective sample size every
                    parameter must reach after burn-in. Default 1000.
  stretch_scale     a > 1 of the stretch move. Default 2.

  Why the default moves. Effective samples of the slowest parameter per
  1000 likelihood evaluations after burn-in (τ from Sokal's window with
  c = 5, as in summary.txt), measured with this program's sampler; "mix"
  is stretch 0.2 + differential_evolution 0.8, "adaptive" is
  { differential_evolution = 1, differential_slice = 1 } with adapt_weights:
    20-dimensional Gaussian, condition number 10^4, 56 walkers, chains of
    58 to 197 τ: stretch 2.6, mix 11.1, differential_evolution alone
    12.8, differential_slice 4.0, gaussian_slice 4.0, adaptive 10.5
    (weights adapted to 0.94 differential evolution).
    Banana (the tests' curved 2-D density), 32 walkers, 170 to 370 τ:
    stretch 5.7, mix 12.3, differential_evolution alone 10.2,
    differential_slice 4.6, adaptive 11.2.
    The demo (150 sources, 26 dimensions, 56 walkers): mix 4.1 over 39 τ,
    stretch 0.9 and differential_slice 1.7 over 4 τ; 112 and 208 walkers
    lift the mix to 5.1 and 5.6, but a run that stops on its own (20 τ)
    then needs more evaluations. Nothing measured reached three times the
    mix (DEVELOPERS.md, "Sampler efficiency").
  A slice update costs about 5 evaluations but brings τ in steps only to
  0.4-0.65 of differential evolution's, so the slice moves cost more per
  effective sample than differential evolution on these targets; they remain for
  posteriors where steps of the local size of the density matter.
  Adapting the weights came within 10-20% of the best fixed choice but
  did not beat the mix, which stays the default.
  The independence move helps with many walkers, about 8 per dimension,
  whose halves give its Student t a well-determined covariance; each half
  needs more walkers than dimensions at the very least. With
  { independence = 0.7, differential_evolution = 0.3 } and 208 walkers it
  gave about twice the mix's effective samples per evaluation in short
  chains (5 to 6 τ): 10.2 against the mix's 4.8 (56 walkers) on the demo
  with its vertical layer (27 dimensions), 12.4 against 5.4 on a
  400-source mock of the demo galaxy. With 104 walkers on the
  26-dimensional demo it gave 3.7, below the mix's 4.1. It is rejected
  almost always where the posterior is far from a t density (several
  modes, strong curvature), so keep a local move beside it.

EXAMPLE
` + Example

// Example is a complete run configuration for the project's model galaxy,
// with every setting shown and commented.
const Example = `# demo.toml: the four arms of the model galaxy, fitted with a linear
# rotation curve.
catalog = "sources.csv"          # required; relative to this file's folder
output = "runs/demo"             # default "run-demo"

[rotation]
curve = "linear"                 # linear | power | nodes
core_radius = 2.0                # kpc
# node_radii = [4, 6, 8, 10, 12, 14]   # kpc, nodes curve only
# interpolation = "monotone"           # nodes curve only

[params]
R0 = "normal(8.25, 0.4)"         # kpc
Theta0 = "uniform(150, 320)"     # km/s
dTheta_dR = "normal(0, 5)"       # km/s/kpc
# alpha = "normal(0, 0.2)"       # power curve
# Theta_1 = "uniform(100, 350)"  # nodes curve, one per node radius
Usun = "normal(10, 5)"           # km/s
Vsun = "normal(12, 10)"          # km/s
Wsun = "normal(7, 3)"            # km/s
Us = "normal(0, 10)"             # km/s
Vs = "normal(-3, 10)"            # km/s
Ws = "normal(0, 10)"             # km/s
sigma_vir = "uniform(0, 30)"     # km/s
width_slope = 0                  # a number fixes the parameter
scale_height = "loguniform(0.005, 0.3)"  # kpc, with vertical = "gaussian"
z_sun = 0                        # kpc, the Sun's height above the mid-plane

[derived_priors]
Omega_sun = "normal(29.65, 1.0)" # km/s/kpc, (Theta0 + Vsun)/R0

[[arm]]
name = "Corvid"
ref_azimuth = 0.0                # deg
azimuth_range = [-30, 160]       # deg
radius = "uniform(5, 7)"         # kpc, Corvid_Rref
pitch = "uniform(5, 20)"         # deg, below the kink
pitch2 = "uniform(5, 20)"        # deg, beyond the kink
kink = "uniform(20, 60)"         # deg
width = "loguniform(0.05, 1)"    # kpc

[[arm]]
name = "Lantern"
azimuth_range = [-20, 200]
radius = "uniform(7, 9)"
pitch = "uniform(5, 20)"

[[arm]]
name = "Tamarisk"
azimuth_range = [-40, 120]
radius = "uniform(9, 11.5)"
pitch = "normal(12, 4)"
width = "loguniform(0.05, 1)"

[[arm]]
name = "Halcyon"
ref_azimuth = 20.0
azimuth_range = [0, 400]         # more than one turn
radius = "uniform(3.5, 5.5)"
pitch = "uniform(5, 25)"

[membership]
field_scale = 3.0                # kpc
concentration = 1.0              # symmetric Dirichlet
arm_end_softening = 3.0          # deg

[likelihood]
error_model = "gaussian"         # gaussian | tolerant | student
student_dof = 4.0                # student only
distance_prior = "galaxy"        # galaxy | parallax
vertical = "gaussian"            # gaussian | none
distance_range = [0.05, 30]      # kpc
tolerance = 1e-4                 # ln L per source
inner_radius = 4.0               # kpc
exclude_inner = false
bar_dispersion = 40.0            # km/s
bar_softening = 0.5              # kpc
pilot_start = { R0 = 8.25 }
pilot_spread = { R0 = 0.3, Theta0 = 8.0 }

# [selection]                                # optional, none by default
# declination = [-30, 90]                    # deg, ICRS
# exclude_longitude = [[350, 10]]            # deg, may wrap through 0
# completeness = { half_distance = 12.0, softness = 1.5 }   # kpc

[sampler]
walkers = 64
steps = 4000                     # 0 = stop on its own
max_steps = 20000
burn = 1000
seed = 1
threads = 0                      # all cores
checkpoint_every = 200
moves = { stretch = 0.2, differential_evolution = 0.8 }  # or walk, differential_slice, gaussian_slice, independence
adapt_weights = false
min_ess = 1000
stretch_scale = 2.0
`
