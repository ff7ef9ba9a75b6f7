package main

import "context"

func runSimulate(ctx context.Context, e *env, args []string) error { return notYet("clinal Simulate") }
