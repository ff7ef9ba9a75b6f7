package main

import "context"

func runPCA(ctx context.Context, e *env, args []string) error { return notYet("clinal PCA") }
