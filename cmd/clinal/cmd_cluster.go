package main

import "context"

func runCluster(ctx context.Context, e *env, args []string) error { return notYet("clinal Cluster") }
