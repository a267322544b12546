package main

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"ringsieve/screening"
	"ringsieve/screening/plan"
)

// planCmd is `ringsieve plan` (contract v1.1, Command line): the plan of POST /v1/plan offline.
func planCmd() *cobra.Command {
	var (
		cf                    conditionFlags
		dp, mn, massG, kp     float64
		solvent, format       string
		catalystMolarMassGmol float64
	)
	cmd := &cobra.Command{
		Use:   "plan [conditions flags] --dp N | --mn-g-mol M [--monomer-mass-g G] SMILES",
		Short: "A polymerization plan for one monomer: amounts, M_n and Đ, time, cyclics, heat",
		Long: "Screens the monomer under the conditions and plans a living polymerization for the target chain\n" +
			"length: [M]0/[I]0, catalyst amount, M_n and dispersity (Poisson and slow initiation), the time to\n" +
			"the target conversion when --kp-l-mol-s is given, Jacobson–Stockmayer cyclics, the solution volume\n" +
			"and the adiabatic temperature rise with graded cautions. Prints a table, or JSON with --format json.",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if format != "table" && format != "json" {
				return fmt.Errorf("--format: %q is not table or json", format)
			}
			c, err := cf.conditions()
			if err != nil {
				return err
			}
			r, err := screening.ScreenContext(cmd.Context(), screening.Source{SMILES: args[0]}, c)
			if err != nil {
				return err
			}
			if c.Bulk && r.Thermo != nil {
				c.Conc = screening.ConcMolL(r.Thermo.MonomerConcMolL)
			}
			in := plan.Input{TargetDP: dp, TargetMn: mn, MonomerMassG: massG, Solvent: solvent}
			if kp > 0 {
				in.KpLmolS = &kp
			}
			if catalystMolarMassGmol > 0 {
				in.CatalystMolarMass = &catalystMolarMassGmol
			}
			p, err := plan.Make(r, in, c)
			if err != nil {
				return err
			}
			if format == "json" {
				enc := json.NewEncoder(cmd.OutOrStdout())
				enc.SetIndent("", "  ")
				return enc.Encode(p)
			}
			return writePlan(cmd.OutOrStdout(), args[0], p)
		},
	}
	cf.register(cmd)
	fl := cmd.Flags()
	fl.Float64Var(&dp, "dp", 0, "target number-average degree of polymerization")
	fl.Float64Var(&mn, "mn-g-mol", 0, "target M_n, g/mol (instead of --dp)")
	fl.Float64Var(&massG, "monomer-mass-g", 1, "monomer charged per batch, g")
	fl.Float64Var(&kp, "kp-l-mol-s", 0, "propagation rate constant, L/(mol s), for the conversion–time curve")
	fl.Float64Var(&catalystMolarMassGmol, "catalyst-molar-mass-g-mol", 0, "molar mass of your initiator (class default otherwise)")
	fl.StringVar(&solvent, "solvent", "toluene", "solvent for the heat estimate: "+fmt.Sprint(plan.SolventNames()))
	fl.StringVar(&format, "format", "table", "output: table or json")
	return cmd
}

func writePlan(out io.Writer, smi string, p plan.Plan) error {
	tw := tabwriter.NewWriter(out, 2, 4, 2, ' ', 0)
	row := func(k, v string) { fmt.Fprintf(tw, "%s\t%s\n", k, v) }
	f := func(v *float64, format string) string {
		if v == nil {
			return "—"
		}
		return fmt.Sprintf(format, *v)
	}
	r := p.Screen
	row("monomer", smi)
	row("verdict", fmt.Sprintf("%s (score %.3f)", r.Verdict, r.Score))
	for _, c := range p.CatalystCompatibility {
		if string(c.Catalyst) == r.Conditions.Catalyst {
			row("catalyst class", fmt.Sprintf("%s (%s)", c.Catalyst, c.Status))
		}
	}
	var tolerated []string
	for _, c := range p.CatalystCompatibility {
		if c.Status == "tolerated" {
			tolerated = append(tolerated, string(c.Catalyst))
		}
	}
	if len(tolerated) > 0 {
		row("classes tolerating it", strings.Join(tolerated, ", "))
	}
	row("DP", f(p.DP, "%.1f"))
	row("M_n, g/mol", f(p.MnGmol, "%.0f"))
	row("[M]0/[I]0", f(p.MonomerToInitiator, "%.1f"))
	row("Đ (Poisson / slow initiation)", f(p.DispersityPoisson, "%.3f")+" / "+f(p.DispersitySlowInitiation, "%.3f"))
	if l := p.Living; l != nil {
		row("equilibrium / chain conversion", fmt.Sprintf("%.3f / %.3f", l.EqConversion, l.ChainConversion))
		row("monomer, mmol", fmt.Sprintf("%.3f", l.MonomerMmol))
		row("catalyst, mmol (mg)", fmt.Sprintf("%.4f (%s)", l.CatalystMmol, f(l.CatalystMassMg, "%.1f")))
		row("time to target, s", f(l.TimeToTargetS, "%.0f"))
	}
	row("critical concentration, mol/L", f(p.CriticalConcMolL, "%.3g"))
	h := p.Hazard
	row("solution volume, mL", f(h.SolventVolumeML, "%.1f"))
	row("heat sink", h.HeatSink)
	row("adiabatic rise, K", fmt.Sprintf("%.1f (%s)", p.AdiabaticRiseK, h.Grade))
	for _, n := range p.Notes {
		row("note", n)
	}
	for _, c := range p.Cautions {
		row("caution", c)
	}
	return tw.Flush()
}
