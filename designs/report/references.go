package report

import (
	"regexp"
	"sort"
	"strings"

	"enough/designs"
)

// Full citations of the formulas and guidelines that a summary cites
// besides its methods (whose citations live in designs.Methods). The
// summary cites each by the short form in the comment beside it.
const (
	citeLachinFoulkes = "Lachin JM, Foulkes MA (1986). Evaluation of sample size and power for analyses of survival with allowance for nonuniform patient entry, losses to follow-up, noncompliance, and stratification. Biometrics 42:507-519" // Lachin & Foulkes 1986
	citeDonnerKlar    = "Donner A, Klar N (2000). Design and Analysis of Cluster Randomization Trials in Health Research. Arnold, London"                                                                                                       // Donner & Klar 2000
	citeEldridge      = "Eldridge SM, Ashby D, Kerry S (2006). Sample size for cluster randomized trials: effect of coefficient of variation of cluster size and analysis method. Int J Epidemiol 35:1292-1300"                                 // Eldridge, Ashby & Kerry 2006
	citeBorm          = "Borm GF, Fransen J, Lemmens WAJG (2007). A simple sample size formula for analysis of covariance in randomized clinical trials. J Clin Epidemiol 60:1234-1238"                                                         // Borm, Fransen & Lemmens 2007
	citeSenn          = "Senn S (2002). Cross-over Trials in Clinical Research, 2nd ed. Wiley, Chichester"                                                                                                                                      // Senn 2002
	citeSchuirmann    = "Schuirmann DJ (1987). A comparison of the two one-sided tests procedure and the power approach for assessing the equivalence of average bioavailability. J Pharmacokinet Biopharm 15:657-680"                          // Schuirmann 1987
	citeWilson        = "Wilson EB (1927). Probable inference, the law of succession, and statistical inference. J Am Stat Assoc 22:209-212"                                                                                                    // Wilson 1927
	citeHolm          = "Holm S (1979). A simple sequentially rejective multiple test procedure. Scand J Stat 6:65-70"                                                                                                                          // Holm 1979
	citeDunn          = "Dunn OJ (1961). Multiple comparisons among means. J Am Stat Assoc 56:52-64"                                                                                                                                            // Dunn 1961
	citeWelch         = "Welch BL (1947). The generalization of 'Student's' problem when several different population variances are involved. Biometrika 34:28-35"                                                                              // Welch 1947
	citeMiettinen     = "Miettinen O, Nurminen M (1985). Comparative analysis of two rates. Stat Med 4:213-226"                                                                                                                                 // Miettinen & Nurminen 1985
	citeHsiehBloch    = "Hsieh FY, Bloch DA, Larsen MD (1998). A simple method of sample size calculation for linear and logistic regression. Stat Med 17:1623-1634"                                                                            // Hsieh, Bloch & Larsen 1998
	citeArmitage      = "Armitage P, McPherson CK, Rowe BC (1969). Repeated significance tests on accumulating data. J R Stat Soc A 132:235-244"
	citeJennison      = "Jennison C, Turnbull BW (2000). Group Sequential Methods with Applications to Clinical Trials. Chapman & Hall/CRC"
	citePocock        = "Pocock SJ (1977). Group sequential methods in the design and analysis of clinical trials. Biometrika 64:191-199"
	citeOBrien        = "O'Brien PC, Fleming TR (1979). A multiple testing procedure for clinical trials. Biometrics 35:549-556"
	citeLanDeMets     = "Lan KKG, DeMets DL (1983). Discrete sequential boundaries for clinical trials. Biometrika 70:659-663"
	citeKimDeMets     = "Kim K, DeMets DL (1987). Design and analysis of group sequential tests based on the type I error spending rate function. Biometrika 74:149-154"
)

// references lists the full citation of every method, formula and
// guideline the summary of r relies on: the chosen method and the other
// methods listed, and each rule the result records having used. The
// summary cites each of them in its text by author and year.
func references(r *designs.Result) []string {
	seen := map[string]bool{}
	var out []string
	add := func(citations ...string) {
		for _, c := range citations {
			// A method's citation may hold several works separated by "; ".
			for _, one := range splitCitation(c) {
				if one != "" && !seen[one] {
					seen[one] = true
					out = append(out, one)
				}
			}
		}
	}
	// A cluster plan's answer is the cluster-level t test's (Donner & Klar,
	// below); the method is cited only where the summary names it, as the
	// individual-level size that starts the search for the clusters.
	named := r.Spec == nil || r.Spec.Cluster == nil || clusterStartNamed(r)
	if named {
		add(r.Citation)
	}
	if r.Method == "fleiss-cc" && named {
		// "Fleiss's formula" is the uncorrected one, which the correction
		// builds on.
		if m := designs.MethodByID("fleiss"); m != nil {
			add(m.Citation)
		}
	}
	for _, a := range r.Alternatives {
		add(a.Citation)
	}
	if r.Result.ExactPower != nil {
		if m := designs.MethodByID("exact"); m != nil {
			add(m.Citation)
		}
	}
	s := r.Spec
	if s != nil {
		if usesDilution(r) || r.Outcome == "time-to-event" {
			add(citeLachinFoulkes)
		}
		if s.Cluster != nil {
			add(citeDonnerKlar)
			if s.Cluster.SizeCV > 0 {
				add(citeEldridge)
			}
		}
		if s.BaselineCorrelation > 0 {
			add(citeBorm)
		}
		if s.Pairing == "crossover" {
			add(citeSenn)
		}
		if s.Hypothesis == "equivalence" {
			add(citeSchuirmann)
		}
		if s.Test == "t-welch" {
			add(citeWelch)
		}
		if s.Adjusted {
			add(citeHsiehBloch)
		}
		if iv := s.Interim; iv != nil {
			add(citeArmitage, citeJennison)
			switch {
			case iv.Boundary == "pocock":
				add(citePocock)
			case iv.Boundary == "obrien-fleming":
				add(citeOBrien)
			case iv.Spending == "power":
				add(citeLanDeMets, citeKimDeMets)
			default:
				add(citeLanDeMets)
			}
		}
		if r.Result.UnmatchedCases > 0 {
			if m := designs.MethodByID("fleiss"); m != nil {
				add(m.Citation)
			}
		}
		if s.Outcome == "binary" && s.MarginScale == "ratio" && s.Hypothesis != "superiority" {
			add(citeMiettinen)
		}
	}
	if r.Result.Arms > 2 {
		add(citeDunn, citeHolm)
	}
	if r.Simulation != nil && len(r.Simulation.CI) == 2 {
		add(citeWilson)
	}
	sort.Strings(out)
	for i, c := range out {
		out[i] = designs.Sentence(pageRange.ReplaceAllString(c, "$1–$2"))
	}
	return out
}

// usesDilution reports whether the result diluted an effect for
// non-adherence or contamination.
func usesDilution(r *designs.Result) bool {
	a := r.Result
	return a.DilutedEffect != nil || (a.Detectable != nil && a.Detectable.Diluted != nil)
}

// pageRange finds a hyphen between page numbers, written as an en dash.
var pageRange = regexp.MustCompile(`(\d)-(\d)`)

// nextWork finds where a second work starts in a citation: "; " followed by
// an author's surname and initials.
var nextWork = regexp.MustCompile(`; ([A-Z][A-Za-z'-]+ [A-Z]{1,3}[,( ])`)

// splitCitation splits a citation that holds several works.
func splitCitation(c string) []string {
	var out []string
	for {
		loc := nextWork.FindStringSubmatchIndex(c)
		if loc == nil {
			return append(out, strings.TrimSpace(c))
		}
		out = append(out, strings.TrimSpace(c[:loc[0]]))
		c = c[loc[2]:]
	}
}

// referenceSection is the References section.
func referenceSection(r *designs.Result) section {
	return section{heading: "References", bullets: references(r)}
}
