package mcmc

import "math/rand/v2"

// splitMix64 is the output function of the SplitMix64 generator (Steele,
// Lea & Flood 2014, OOPSLA '14, "Fast splittable pseudorandom number
// generators"), used here to turn a seed and an index into well-mixed,
// unrelated PCG seeds.
func splitMix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// streamTag distinguishes the move-choice stream from the walkers' streams.
const moveStreamTag = 0xffff_ffff_ffff_fffe

// newStream returns the PCG generator of stream tag for a run seed. Walker i
// uses tag i; the move-choice stream uses moveStreamTag.
func newStream(seed, tag uint64) *rand.PCG {
	a := splitMix64(seed ^ splitMix64(tag+1))
	b := splitMix64(a ^ 0x6a09e667f3bcc909)
	return rand.NewPCG(a, b)
}
