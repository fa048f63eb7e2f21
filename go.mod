module warmfit

go 1.26.8

require (
	github.com/spf13/pflag v1.1.0
	golang.org/x/sync v0.25.0
	gonum.org/v1/gonum v0.17.0
)
