package main

import "context"

func runProject(ctx context.Context, e *env, args []string) error { return notYet("clinal Project") }
