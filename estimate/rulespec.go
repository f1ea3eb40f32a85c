package estimate

import (
	"fmt"
	"strconv"
	"strings"
	"time"
)

// RuleSpec is a rule of thumb: a share of the best mean power over one
// duration, taken as the threshold (common practice; no standard error).
type RuleSpec struct {
	DurationS int
	Share     float64
}

// DefaultRules are 95 % of the best 20 min and the best 60 min, the rules
// of thumb most widely used (common practice). An analyst names others
// with ParseRules.
var DefaultRules = []RuleSpec{{1200, 0.95}, {3600, 1}}

// Name is how the rule reads: "95% of best 20 min", "best 60 min".
func (r RuleSpec) Name() string {
	if r.Share == 1 {
		return "best " + minutes(r.DurationS)
	}
	return fmt.Sprintf("%s%% of best %s", strconv.FormatFloat(100*r.Share, 'f', -1, 64), minutes(r.DurationS))
}

// Method is the rule's name among the methods compared: "20min", "60min",
// or "90s" for a duration that is not whole minutes.
func (r RuleSpec) Method() string { return RuleMethod(r.DurationS) }

// RuleMethod is the method name of a rule over d seconds.
func RuleMethod(d int) string {
	if d%60 == 0 {
		return fmt.Sprintf("%dmin", d/60)
	}
	return fmt.Sprintf("%ds", d)
}

// ParseRules reads rules of thumb such as "20m:0.95,60m:1" (a duration in
// s, m or h, a colon, the share of its best mean power: above 0, at most 1).
func ParseRules(s string) ([]RuleSpec, error) {
	var out []RuleSpec
	for _, part := range strings.Split(s, ",") {
		part = strings.TrimSpace(part)
		dur, share, ok := strings.Cut(part, ":")
		if !ok {
			return nil, fmt.Errorf("rule %q is not DURATION:SHARE (for example 20m:0.95)", part)
		}
		d, err := time.ParseDuration(strings.TrimSpace(dur))
		if err != nil || d < time.Second || d > 6*time.Hour || d%time.Second != 0 {
			return nil, fmt.Errorf("rule %q: the duration is not whole seconds from 1 s to 6 h (20m, 90s, 1h)", part)
		}
		f, err := strconv.ParseFloat(strings.TrimSpace(share), 64)
		if err != nil || !(f > 0 && f <= 1) {
			return nil, fmt.Errorf("rule %q: the share is not a number above 0 and at most 1", part)
		}
		r := RuleSpec{int(d / time.Second), f}
		for _, q := range out {
			if q.DurationS == r.DurationS {
				return nil, fmt.Errorf("rules name %s twice", minutes(r.DurationS))
			}
		}
		out = append(out, r)
	}
	return out, nil
}
