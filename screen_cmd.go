package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"text/tabwriter"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"ringsieve/screening"
	"ringsieve/screening/batch"
	"ringsieve/screening/units"
)

// conditionFlags are the conditions flags shared by screen, submit and plan.
type conditionFlags struct {
	tempC    float64
	concMolL float64
	catalyst string
	bulk     bool
	thermo   string
}

func (f *conditionFlags) register(cmd *cobra.Command) {
	fl := cmd.Flags()
	fl.Float64Var(&f.tempC, "temp-c", 25, "temperature, °C")
	fl.Float64Var(&f.concMolL, "conc-mol-l", 1.0, "initial monomer concentration, mol/L")
	fl.StringVar(&f.catalyst, "catalyst", "ru-nhc", "catalyst class: ru-phosphine, ru-nhc, ru-pyridine, mo-w-imido, classical")
	fl.BoolVar(&f.bulk, "bulk", false, "neat monomer: concentration estimated from the structure (overrides --conc-mol-l)")
	fl.StringVar(&f.thermo, "thermo-method", "auto", "ΔH_p estimate: auto (force-field difference where the structure differs from its parent ring), table (fast), forcefield")
}

func (f *conditionFlags) conditions() (screening.Conditions, error) {
	c := screening.DefaultConditions()
	t, err := units.TempFromCelsius(f.tempC)
	if err != nil {
		return c, fmt.Errorf("--temp-c: %w", err)
	}
	c.Temp = t
	conc, err := units.NewConcMolL(f.concMolL)
	if err != nil {
		return c, fmt.Errorf("--conc-mol-l: %w", err)
	}
	c.Conc = conc
	c.Bulk = f.bulk
	cat, err := units.ParseCatalystClass(f.catalyst)
	if err != nil {
		return c, fmt.Errorf("--catalyst: %w", err)
	}
	c.Catalyst = cat
	tm, err := units.ParseThermoMethod(f.thermo)
	if err != nil {
		return c, fmt.Errorf("--thermo-method: %w", err)
	}
	c.ThermoMethod = tm
	return c, nil
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

func openInput(cmd *cobra.Command, name string) (io.ReadCloser, error) {
	if name == "-" {
		return io.NopCloser(cmd.InOrStdin()), nil
	}
	return os.Open(name)
}

func screenCmd() *cobra.Command {
	var cf conditionFlags
	var format, inFormat, idField, verdicts, compatible, minCeilingC string
	var cmpTemp, cmpConc float64
	var cmpCatalyst string
	cmd := &cobra.Command{
		Use:   "screen [flags] FILE|-",
		Short: "Screen a file of monomers offline and print them ranked",
		Long: "Screen monomers without a server. Input: one SMILES per line (optionally followed by an id), CSV with columns id,smiles " +
			"(header optional; extra columns are carried through), or an SD file (V2000). Output is ranked by score, ties by ΔG_p.",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			cond, err := cf.conditions()
			if err != nil {
				return err
			}
			tuneGC()
			out := cmd.OutOrStdout()
			if format == "" {
				format = "csv"
				if isTerminal(out) {
					format = "table"
				}
			}
			if format != "csv" && format != "jsonl" && format != "table" {
				return fmt.Errorf("--format must be csv, jsonl or table")
			}
			filter, err := batch.ParseFilter(verdicts, compatible, minCeilingC)
			if err != nil {
				return fmt.Errorf("--%s", err)
			}
			compare := cmd.Flags().Changed("compare-temp-c") || cmd.Flags().Changed("compare-conc-mol-l") || cmd.Flags().Changed("compare-catalyst")
			var condB screening.Conditions
			if compare {
				b := cf
				if cmd.Flags().Changed("compare-temp-c") {
					b.tempC = cmpTemp
				}
				if cmd.Flags().Changed("compare-conc-mol-l") {
					b.concMolL = cmpConc
				}
				if cmd.Flags().Changed("compare-catalyst") {
					b.catalyst = cmpCatalyst
				}
				if condB, err = b.conditions(); err != nil {
					return fmt.Errorf("comparison conditions: %w", err)
				}
			}
			f, err := openInput(cmd, args[0])
			if err != nil {
				return err
			}
			defer f.Close()
			if !compare {
				// streamed: read, screen and render overlap; memory holds compact rows only
				var bar *progressbar.ProgressBar
				if isTerminal(cmd.ErrOrStderr()) {
					bar = progressbar.NewOptions(-1, progressbar.OptionSetWriter(cmd.ErrOrStderr()),
						progressbar.OptionSetDescription("screening"), progressbar.OptionShowCount(), progressbar.OptionThrottle(100*1e6),
						progressbar.OptionClearOnFinish())
				}
				st, err := screenStream(cmd.Context(), f, inFormat, idField, cond, format, filter, out, bar, spoolConfig{})
				if err != nil {
					return err
				}
				for _, e := range st.inputErrors {
					fmt.Fprintf(cmd.ErrOrStderr(), "skipped line %d: %s\n", e.Line, e.Msg)
				}
				failed := len(st.inputErrors) + st.failed
				fmt.Fprintf(cmd.ErrOrStderr(), "screened %d, failed %d\n", st.screened, failed)
				if failed > 0 {
					return rowsFailed
				}
				return nil
			}
			in, err := batch.ReadInput(f, inFormat, idField, 0)
			if err != nil {
				return err
			}
			for _, e := range in.Errors {
				fmt.Fprintf(cmd.ErrOrStderr(), "skipped line %d: %s\n", e.Line, e.Msg)
			}
			rs := screenAll(cmd, in.Items, cond, nil)
			rb := screenAll(cmd, in.Items, condB, nil)
			if err := writeCompared(out, format, in.Items, rs, rb, cond, condB); err != nil {
				return err
			}
			failed := len(in.Errors)
			for _, r := range rs {
				if r.Err != nil {
					failed++
				}
			}
			fmt.Fprintf(cmd.ErrOrStderr(), "screened %d, failed %d\n", len(rs)-failed+len(in.Errors), failed)
			if failed > 0 {
				return rowsFailed
			}
			return nil
		},
	}
	cf.register(cmd)
	fl := cmd.Flags()
	fl.StringVar(&format, "format", "", "output: csv, jsonl or table (default table on a terminal, csv otherwise)")
	fl.StringVar(&inFormat, "input-format", "", "input: smiles, csv or sdf (default: detected)")
	fl.StringVar(&idField, "id-field", "", "SDF data field (or CSV column) that holds the id")
	fl.StringVar(&verdicts, "verdict", "", "comma-separated verdicts to keep (e.g. polymerizes,equilibrium_limited)")
	fl.StringVar(&compatible, "compatible-with", "", "keep monomers this catalyst class tolerates (tolerated or conditional)")
	fl.StringVar(&minCeilingC, "min-ceiling-c", "", "keep monomers whose ceiling temperature is at least this, °C (the top of your working window)")
	fl.Float64Var(&cmpTemp, "compare-temp-c", 0, "also screen at this temperature (°C) and print both side by side")
	fl.Float64Var(&cmpConc, "compare-conc-mol-l", 0, "also screen at this concentration (mol/L) and print both side by side")
	fl.StringVar(&cmpCatalyst, "compare-catalyst", "", "also screen with this catalyst class and print both side by side")
	return cmd
}

// screenAll screens items on every core and returns them ranked.
func screenAll(cmd *cobra.Command, items []batch.InputItem, cond screening.Conditions, bar *progressbar.ProgressBar) []batch.Row {
	rows := make([]batch.Row, len(items))
	batch.Map(cmd.Context(), len(items), 0, func(i int) {
		r, err := batch.ScreenItemContext(cmd.Context(), items[i], cond)
		rows[i] = batch.NewRow(i, r, err)
		if bar != nil {
			bar.Add(1)
		}
	})
	if bar != nil {
		bar.Finish()
	}
	batch.Rank(rows)
	return rows
}

// ceilingText shows a ceiling temperature for the table, extrapolated ones as bounds.
func ceilingText(t *screening.Thermo) string {
	switch {
	case t.CeilingTempK == nil && t.CriticalConcMolL != nil:
		return fmt.Sprintf("none (floor %.2g M)", *t.CriticalConcMolL)
	case t.CeilingTempK == nil:
		return "none"
	case t.CeilingTempExtrapolated && *t.CeilingTempK > screening.ExtrapolatedAboveK:
		return "> 500*"
	case t.CeilingTempExtrapolated:
		return "< 200*"
	}
	return fmt.Sprintf("%.0f", *t.CeilingTempK)
}

// writeCompared prints one list under two condition sets side by side, in the order of set A.
func writeCompared(out io.Writer, format string, items []batch.InputItem, a, b []batch.Row, ca, cb screening.Conditions) error {
	rankB := make([]int, len(items)) // item sequence -> rank under B
	resB := make([]*batch.Row, len(items))
	for i := range b {
		rankB[b[i].Seq] = i + 1
		resB[b[i].Seq] = &b[i]
	}
	cell := func(r *batch.Row) (verdict, score, conv, tc string) {
		if r == nil || r.Result == nil {
			return "error", "", "", ""
		}
		verdict, score = r.Result.Verdict, fmt.Sprintf("%.4f", r.Result.Score)
		if t := r.Result.Thermo; t != nil {
			conv = fmt.Sprintf("%.4f", t.EqConversion)
			if t.CeilingTempK != nil {
				tc = fmt.Sprintf("%.1f", *t.CeilingTempK)
			}
		}
		return
	}
	label := func(c screening.Conditions) string {
		return fmt.Sprintf("%g °C, %g mol/L, %s", c.Temp.Celsius(), float64(c.Conc), c.Catalyst)
	}
	switch format {
	case "jsonl":
		enc := json.NewEncoder(out)
		for i := range a {
			rb := resB[a[i].Seq]
			row := map[string]any{"id": items[a[i].Seq].ID, "a": map[string]any{"conditions": label(ca), "rank": i + 1, "result": a[i].Result}, "b": map[string]any{"conditions": label(cb), "rank": rankB[a[i].Seq], "result": rb.Result}}
			if err := enc.Encode(row); err != nil {
				return err
			}
		}
		return nil
	case "csv":
		w := csv.NewWriter(out)
		w.Write([]string{"id", "rank_a", "verdict_a", "score_a", "eq_conversion_a", "ceiling_temp_k_a", "rank_b", "verdict_b", "score_b", "eq_conversion_b", "ceiling_temp_k_b", "verdict_changes"})
		for i := range a {
			rb := resB[a[i].Seq]
			va, sa, xa, ta := cell(&a[i])
			vb, sb, xb, tb := cell(rb)
			w.Write([]string{items[a[i].Seq].ID, fmt.Sprint(i + 1), va, sa, xa, ta, fmt.Sprint(rankB[a[i].Seq]), vb, sb, xb, tb, fmt.Sprint(va != vb)})
		}
		w.Flush()
		return w.Error()
	default:
		tw := tabwriter.NewWriter(out, 2, 4, 2, ' ', 0)
		fmt.Fprintf(tw, "ID\tA: %s\t\t\tB: %s\t\t\tCHANGE\n", label(ca), label(cb))
		fmt.Fprintln(tw, "\tRANK\tVERDICT\tX_eq\tRANK\tVERDICT\tX_eq\t")
		for i := range a {
			rb := resB[a[i].Seq]
			va, _, xa, _ := cell(&a[i])
			vb, _, xb, _ := cell(rb)
			ch := ""
			if va != vb {
				ch = "verdict changes"
			}
			fmt.Fprintf(tw, "%s\t%d\t%s\t%s\t%d\t%s\t%s\t%s\n", items[a[i].Seq].ID, i+1, va, xa, rankB[a[i].Seq], vb, xb, ch)
		}
		return tw.Flush()
	}
}
