package main

import "context"

func runImport(ctx context.Context, e *env, args []string) error { return notYet("clinal Import") }

func runInspect(ctx context.Context, e *env, args []string) error { return notYet("clinal Inspect") }

func runExport(ctx context.Context, e *env, args []string) error { return notYet("clinal Export") }
