// Command enough plans and checks the sample size and power of health
// studies. See README.md.
package main

import "os"

func main() { os.Exit(Execute(os.Args[1:], DefaultIO())) }
