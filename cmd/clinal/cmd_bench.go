package main

import "context"

func runBench(ctx context.Context, e *env, args []string) error { return notYet("clinal Bench") }
