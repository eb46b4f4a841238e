// Command enough plans and checks the sample size and power of health
// studies. See README.md.
package main

import (
	"os"

	"enough/internal/cli"
)

func main() { os.Exit(cli.Execute(os.Args[1:], cli.DefaultIO())) }
