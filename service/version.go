package service

import "runtime/debug"

// Version is the release, set at build time with
// -ldflags "-X lipidsvc/service.Version=v1.4.0"; without it the build
// information gives the module version and the VCS revision.
var Version = ""

// version is the version provenance records and /healthz name.
func version() string {
	if Version != "" {
		return Version
	}
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return "unknown"
	}
	v := bi.Main.Version
	var rev, modified string
	for _, s := range bi.Settings {
		switch s.Key {
		case "vcs.revision":
			rev = s.Value
		case "vcs.modified":
			if s.Value == "true" {
				modified = "-modified"
			}
		}
	}
	if len(rev) > 12 {
		rev = rev[:12]
	}
	if rev != "" {
		v += "+" + rev + modified
	}
	return v
}
