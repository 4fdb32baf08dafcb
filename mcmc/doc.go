// Package mcmc samples a probability density over R^n with an
// affine-invariant ensemble of walkers (Goodman & Weare 2010, Comm. App.
// Math. Comp. Sci. 5, 65) and provides the diagnostics to judge the result.
// It knows nothing of the models it samples.
//
// # Running
//
// A run is a Problem (a log-density and its dimension), a Start (a Gaussian
// ball, a draw function, optionally centred on the maximum found by FindMAP)
// and Settings (every field documented with its meaning and default):
//
//	res, err := mcmc.Run(ctx, mcmc.Problem{LogDensity: f, Dim: 3},
//		mcmc.Start{Center: c, Scale: s},
//		&mcmc.Settings{Seed: 7, Steps: 5000, Names: []string{"a", "b", "c"}})
//
// Each step moves the first half of the ensemble against the second and then
// the second against the first; within a half the proposals are evaluated
// concurrently by Settings.Threads goroutines. Moves sit behind the Move
// interface: StretchMove (Goodman & Weare 2010), DifferentialMove (ter Braak
// 2006, Stat. Comput. 16, 239) and WalkMove (Goodman & Weare 2010), the
// ensemble slice moves DifferentialSliceMove and GaussianSliceMove (Karamanis
// & Beutler 2021, Stat. Comput. 31, 61), and IndependenceMove (independence
// Metropolis–Hastings from a Student t fitted to the other half of the
// ensemble, Tierney 1994, Ann. Stat. 22, 1701), mixed by weight; the move of each
// step is drawn from a random stream of its own. A slice update costs a
// variable number of evaluations, made one after another by the walker's
// own worker: a walker's update depends only on its own stream, its own
// position and the other half, so the half's walkers still run in parallel
// with nothing depending on which worker runs which. During the first
// Settings.TuneSteps steps the slice widths are tuned and, with
// Settings.AdaptWeights, the move weights adapt; both are frozen afterwards.
// Every log-density evaluation is counted (Result.Evaluations,
// Progress.Evaluations).
// Every walker draws from its own PCG stream derived from the seed and its
// index, so a run is the same bit for bit whatever the number of threads,
// and a resumed run continues exactly as an uninterrupted one.
//
// A run stops after Settings.Steps steps (the total length of the chain), or
// by the automatic rule (longer than TauFactor = 50 autocorrelation times,
// which changed by less than 1% since the last check, and an effective
// sample size of at least MinESS for every parameter), or when its
// wall-clock budget is used up, or when its context is cancelled; each way of
// stopping leaves a checkpoint (when a checkpoint file is set) to resume from.
//
// # Chain file
//
// A run with Settings.ChainPath streams its kept steps to a NumPy .npy file
// (format 1.0, or 2.0 for very long headers and 3.0 for non-ASCII names, as
// in NumPy's numpy.lib.format documentation and NEP 1) and holds no copy of
// the chain in memory; diagnostics during the run and the Result's Chain read
// the file back, the latter memory-mapped. The array has shape
// (kept steps, walkers), in C order, and a structured dtype of little-endian
// 8-byte fields:
//
//	step         int64    the step number counted from 1 (every Settings.Thin-th)
//	walker       int64    the walker's index from 0 to W−1
//	log_density  float64  the target's log-density at the position, as returned
//	NAME_1 …     float64  one field per parameter, named by Settings.Names
//
// In Python, c = numpy.load(path, mmap_mode="r") opens it without reading it;
// c["NAME"][:, k] is walker k's trace and c["NAME"][burn:].ravel() a sample.
// The header states how many steps the file holds; it is rewritten in place
// (it keeps its length) whenever the file is synced, at every checkpoint and
// at the end, so a reader sees every step up to the last checkpoint. Rows
// after it may be lost or cut in a crash; they are cut back when the run is
// resumed. OpenChain and ReadChainFile read the file; ReadChain and
// WriteChain read and write the same chain as CSV (header
// step,walker,log_density,NAME…, one line per walker per kept step, numbers
// in the shortest form that reads back to the same float64, optional '#'
// comment lines at the top) for tools that want text.
//
// # Checkpoints
//
// A checkpoint file holds everything a run needs to continue: positions,
// log-densities, acceptance counts, every walker's random-stream state, the
// move-choice stream, the step, the last autocorrelation estimate, the
// tuned slice widths and move weights, the evaluation count, the
// settings that must not change (seed, walkers, dimension, thinning, names,
// moves), the chain file's length and the CRC-32C of its rows, and the caller's own bytes
// (CheckpointReply.Extra). It is binary: the 8 bytes "MCMCCKPT", a
// little-endian uint32 layout version, a uint64 payload length, the payload,
// and a CRC-32C (Castagnoli) of all that precedes it. It is replaced
// atomically (temporary file, fsync, rename). A truncated or corrupted
// checkpoint, or a chain file that does not match its checkpoint, is refused
// with an error naming the file.
//
// # Diagnostics
//
// Plain functions over slices: AutocorrFunc, EnsembleAutocorr,
// IntegratedTime and AutocorrTime (Sokal's automatic window),
// EffectiveSize, AcceptanceFractions, Quantile and Quantiles (weighted),
// SplitRhat, BulkESS and TailESS (Vehtari et al. 2021, Bayesian Analysis 16,
// 667), and FlagStuck. Summarize applies them to every parameter of a Chain.
// A finished run is read back with ReadChainFile; runs are combined with
// MergeChains and written with WriteChain.
//
// # Comparing models
//
// PSISLOO estimates a model's expected log predictive density for new data
// by Pareto-smoothed importance-sampling leave-one-out cross-validation
// (Vehtari, Gelman & Gabry 2017, Stat. Comput. 27, 1413; Vehtari et al.
// 2024, JMLR 25, 72) from a matrix of pointwise log-likelihoods, with the
// Pareto k̂ of every observation (ParetoSmooth, GPDFit); ComputeWAIC gives
// WAIC from the same matrix, and PairedDifference the difference of two
// models with its standard error. They agree with the R package loo.
package mcmc
