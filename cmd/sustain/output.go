package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/urfave/cli/v2"
)

// forceFlag lets a command replace an output file that exists.
func forceFlag() cli.Flag {
	return &cli.BoolFlag{Name: "force", Usage: "replace an output file that exists (never a link, never inside a folder being read)"}
}

// checkNewFile refuses an output path (named by flag) that exists, unless
// --force, or that is a link, a folder, or inside one of the folders the
// command reads: the tool never overwrites or writes into what the user
// owns unless told to, and never writes where it reads.
func checkNewFile(c *cli.Context, flag, path string, reads []string) error {
	if path == "" {
		return nil
	}
	if fi, err := os.Lstat(path); err == nil {
		switch {
		case fi.Mode()&os.ModeSymlink != 0:
			return usageError{fmt.Sprintf("--%s %s is a link: name a new file", flag, path)}
		case fi.IsDir():
			return usageError{fmt.Sprintf("--%s %s is a folder: name a new file", flag, path)}
		case !c.Bool("force"):
			return usageError{fmt.Sprintf("--%s %s exists: name a new file, or --force to replace it", flag, path)}
		}
	}
	if in := inside(path, reads); in != "" {
		return usageError{fmt.Sprintf("--%s %s is inside %s, which is being read: write it elsewhere", flag, path, in)}
	}
	return nil
}

// inside returns the folder among reads that holds path, or "".
func inside(path string, reads []string) string {
	abs, err := filepath.Abs(path)
	if err != nil {
		return ""
	}
	if real, err := filepath.EvalSymlinks(filepath.Dir(abs)); err == nil {
		abs = filepath.Join(real, filepath.Base(abs))
	}
	for _, r := range reads {
		fi, err := os.Stat(r)
		if err != nil || !fi.IsDir() {
			continue
		}
		ra, err := filepath.Abs(r)
		if err != nil {
			continue
		}
		if real, err := filepath.EvalSymlinks(ra); err == nil {
			ra = real
		}
		if abs == ra || strings.HasPrefix(abs, ra+string(filepath.Separator)) {
			return r
		}
	}
	return ""
}
