module github.com/clinal/clinal

go 1.26.8

require (
	github.com/klauspost/compress v1.20.4
	golang.org/x/sync v0.25.0
)
