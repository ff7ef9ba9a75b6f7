package main

import "context"

func runQC(ctx context.Context, e *env, args []string) error { return notYet("clinal QC") }
