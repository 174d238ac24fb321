package cli

import "drawerfit/fault"

// The production steps of fit. Placeholders until the production
// package lands: each refuses clearly instead of pretending.

func runPlanFit(env *Env, o *fitOptions) error {
	return fault.Invalidf("--plan is not available in this build yet")
}

func saveFitCandidates(env *Env, o *fitOptions, run *fitRun) ([]string, error) {
	return nil, fault.Invalidf("--save is not available in this build yet")
}

func suggestForFit(env *Env, o *fitOptions, run *fitRun) error {
	return fault.Invalidf("--suggest is not available in this build yet")
}
