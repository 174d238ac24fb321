// Command drawerfit designs active analog filters from the parts on hand.
package main

import (
	"os"

	"drawerfit/cmd/drawerfit/cli"
)

func main() { os.Exit(cli.Main()) }
