package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"runtime"
	"sort"
	"strings"
	"sync"
	"text/tabwriter"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
	"golang.org/x/term"

	"ringsieve/screening"
)

// conditionFlags are the conditions flags shared by screen and submit.
type conditionFlags struct {
	tempC    float64
	concMolL float64
	catalyst string
	bulk     bool
}

func (f *conditionFlags) register(cmd *cobra.Command) {
	fl := cmd.Flags()
	fl.Float64Var(&f.tempC, "temp-c", 25, "temperature, °C")
	fl.Float64Var(&f.concMolL, "conc-mol-l", 1.0, "initial monomer concentration, mol/L")
	fl.StringVar(&f.catalyst, "catalyst", "ru-nhc", "catalyst class: ru-phosphine, ru-nhc, ru-pyridine, mo-w-imido, classical")
	fl.BoolVar(&f.bulk, "bulk", false, "neat monomer: concentration estimated from the structure (overrides --conc-mol-l)")
}

func (f *conditionFlags) conditions() (screening.Conditions, error) {
	c := screening.DefaultConditions()
	t, err := screening.TempFromCelsius(f.tempC)
	if err != nil {
		return c, fmt.Errorf("--temp-c: %w", err)
	}
	c.Temp = t
	conc, err := screening.NewConcMolL(f.concMolL)
	if err != nil {
		return c, fmt.Errorf("--conc-mol-l: %w", err)
	}
	c.Conc = conc
	c.Bulk = f.bulk
	cat, err := screening.ParseCatalystClass(f.catalyst)
	if err != nil {
		return c, fmt.Errorf("--catalyst: %w", err)
	}
	c.Catalyst = cat
	return c, nil
}

// ranked is one screened input item.
type ranked struct {
	item screening.InputItem
	res  *screening.Result
	err  error
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
	var format, inFormat, idField, verdicts, compatible string
	var minCeilingC float64
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
			keep, err := verdictSet(verdicts)
			if err != nil {
				return err
			}
			filter := screening.ResultFilter{Verdicts: keep}
			if compatible != "" {
				if filter.Compatible, err = screening.ParseCatalystClass(compatible); err != nil {
					return fmt.Errorf("--compatible-with: %w", err)
				}
			}
			if cmd.Flags().Changed("min-ceiling-c") {
				k := minCeilingC + screening.ZeroCelsiusK
				filter.MinCeilingK = &k
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
			in, err := screening.ReadInput(f, inFormat, idField, 0)
			if err != nil {
				return err
			}
			for _, e := range in.Errors {
				fmt.Fprintf(cmd.ErrOrStderr(), "skipped line %d: %s\n", e.Line, e.Msg)
			}
			var bar *progressbar.ProgressBar
			if isTerminal(cmd.ErrOrStderr()) && len(in.Items) > 200 {
				bar = progressbar.NewOptions(len(in.Items), progressbar.OptionSetWriter(cmd.ErrOrStderr()),
					progressbar.OptionSetDescription("screening"), progressbar.OptionShowCount(), progressbar.OptionThrottle(100*1e6),
					progressbar.OptionClearOnFinish())
			}
			rs := screenAll(in.Items, cond, bar)
			rankAll(rs)
			if compare {
				rb := screenAll(in.Items, condB, nil)
				rankAll(rb)
				return writeCompared(out, format, rs, rb, cond, condB)
			}
			return writeRanked(out, format, rs, in.ExtraColumns, filter)
		},
	}
	cf.register(cmd)
	fl := cmd.Flags()
	fl.StringVar(&format, "format", "", "output: csv, jsonl or table (default table on a terminal, csv otherwise)")
	fl.StringVar(&inFormat, "input-format", "", "input: smiles, csv or sdf (default: detected)")
	fl.StringVar(&idField, "id-field", "", "SDF data field (or CSV column) that holds the id")
	fl.StringVar(&verdicts, "verdict", "", "comma-separated verdicts to keep (e.g. polymerizes,equilibrium_limited)")
	fl.StringVar(&compatible, "compatible-with", "", "keep monomers this catalyst class tolerates (tolerated or conditional)")
	fl.Float64Var(&minCeilingC, "min-ceiling-c", 0, "keep monomers whose ceiling temperature is at least this, °C (the top of your working window)")
	fl.Float64Var(&cmpTemp, "compare-temp-c", 0, "also screen at this temperature (°C) and print both side by side")
	fl.Float64Var(&cmpConc, "compare-conc-mol-l", 0, "also screen at this concentration (mol/L) and print both side by side")
	fl.StringVar(&cmpCatalyst, "compare-catalyst", "", "also screen with this catalyst class and print both side by side")
	return cmd
}

func verdictSet(s string) (map[string]bool, error) {
	keep := map[string]bool{}
	if s == "" {
		return keep, nil
	}
	valid := map[string]bool{screening.VerdictPolymerizes: true, screening.VerdictEquilibrium: true, screening.VerdictUnfavorable: true,
		screening.VerdictBlocked: true, screening.VerdictNotMonomer: true}
	for _, v := range strings.Split(s, ",") {
		v = strings.TrimSpace(v)
		if !valid[v] {
			return nil, fmt.Errorf("--verdict: unknown verdict %q", v)
		}
		keep[v] = true
	}
	return keep, nil
}

// screenAll screens items on every core, keeping input order.
func screenAll(items []screening.InputItem, cond screening.Conditions, bar *progressbar.ProgressBar) []ranked {
	rs := make([]ranked, len(items))
	next := make(chan int, 256)
	var wg sync.WaitGroup
	for w := 0; w < runtime.NumCPU(); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				r, err := screening.ScreenItem(items[i], cond)
				rs[i] = ranked{item: items[i], err: err}
				if err == nil {
					rs[i].res = &r
				}
				if bar != nil {
					bar.Add(1)
				}
			}
		}()
	}
	for i := range items {
		next <- i
	}
	close(next)
	wg.Wait()
	if bar != nil {
		bar.Finish()
	}
	return rs
}

// rankAll orders screened items by score descending, then ΔG_p, then input order; failures last.
func rankAll(rs []ranked) {
	dg := func(r *screening.Result) float64 {
		if r.Thermo == nil {
			return 1e9
		}
		return r.Thermo.DGkJmol
	}
	sort.SliceStable(rs, func(i, j int) bool {
		a, b := rs[i].res, rs[j].res
		if (a == nil) != (b == nil) {
			return a != nil
		}
		if a == nil {
			return false
		}
		if a.Score != b.Score {
			return a.Score > b.Score
		}
		return dg(a) < dg(b)
	})
}

func writeRanked(out io.Writer, format string, rs []ranked, extraCols []string, f screening.ResultFilter) error {
	skip := func(r ranked) bool { return f.Active() && (r.res == nil || !f.Keeps(r.res)) }
	switch format {
	case "csv":
		w := csv.NewWriter(out)
		w.Write(screening.CSVHeader(extraCols))
		for i, r := range rs {
			if skip(r) {
				continue
			}
			msg := ""
			if r.err != nil {
				msg = r.err.Error()
			}
			w.Write(screening.CSVRow(i+1, r.item.ID, r.item.Line, r.res, msg, r.item.Extra))
		}
		w.Flush()
		return w.Error()
	case "jsonl":
		enc := json.NewEncoder(out)
		for i, r := range rs {
			if skip(r) {
				continue
			}
			row := map[string]any{"rank": i + 1, "id": r.item.ID, "line": r.item.Line}
			if r.err != nil {
				row["error"] = r.err.Error()
			} else {
				row["result"] = r.res
			}
			if len(extraCols) > 0 {
				ex := map[string]string{}
				for k, c := range extraCols {
					if k < len(r.item.Extra) {
						ex[c] = r.item.Extra[k]
					}
				}
				row["extra"] = ex
			}
			if err := enc.Encode(row); err != nil {
				return err
			}
		}
		return nil
	default:
		tw := tabwriter.NewWriter(out, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "RANK\tID\tVERDICT\tSCORE\tΔH_p kJ/mol\tT_c K\tX_eq\tMAIN REASONS")
		for i, r := range rs {
			if skip(r) {
				continue
			}
			if r.err != nil {
				fmt.Fprintf(tw, "%d\t%s\terror\t\t\t\t\t%s\n", i+1, r.item.ID, r.err)
				continue
			}
			dh, tc, x := "", "", ""
			if t := r.res.Thermo; t != nil {
				dh = fmt.Sprintf("%.1f ± %.1f", t.DHkJmol, t.DHUncKJmol)
				if t.CeilingTempK != nil {
					tc = fmt.Sprintf("%.0f", *t.CeilingTempK)
				} else {
					tc = "none"
				}
				x = fmt.Sprintf("%.3f", t.EqConversion)
			}
			fmt.Fprintf(tw, "%d\t%s\t%s\t%.3f\t%s\t%s\t%s\t%s\n", i+1, r.item.ID, r.res.Verdict, r.res.Score, dh, tc, x, screening.MainReasons(r.res))
		}
		return tw.Flush()
	}
}

// writeCompared prints one list under two condition sets side by side, in the order of set A.
func writeCompared(out io.Writer, format string, a, b []ranked, ca, cb screening.Conditions) error {
	rankB := make(map[int]int, len(b)) // input line -> rank under B
	resB := make(map[int]*ranked, len(b))
	for i := range b {
		rankB[b[i].item.Line] = i + 1
		resB[b[i].item.Line] = &b[i]
	}
	cell := func(r *ranked) (verdict, score, conv, tc string) {
		if r == nil || r.res == nil {
			return "error", "", "", ""
		}
		verdict, score = r.res.Verdict, fmt.Sprintf("%.4f", r.res.Score)
		if t := r.res.Thermo; t != nil {
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
			rb := resB[a[i].item.Line]
			row := map[string]any{"id": a[i].item.ID, "a": map[string]any{"conditions": label(ca), "rank": i + 1, "result": a[i].res}, "b": map[string]any{"conditions": label(cb), "rank": rankB[a[i].item.Line], "result": rb.res}}
			if err := enc.Encode(row); err != nil {
				return err
			}
		}
		return nil
	case "csv":
		w := csv.NewWriter(out)
		w.Write([]string{"id", "rank_a", "verdict_a", "score_a", "eq_conversion_a", "ceiling_temp_k_a", "rank_b", "verdict_b", "score_b", "eq_conversion_b", "ceiling_temp_k_b", "verdict_changes"})
		for i := range a {
			rb := resB[a[i].item.Line]
			va, sa, xa, ta := cell(&a[i])
			vb, sb, xb, tb := cell(rb)
			w.Write([]string{a[i].item.ID, fmt.Sprint(i + 1), va, sa, xa, ta, fmt.Sprint(rankB[a[i].item.Line]), vb, sb, xb, tb, fmt.Sprint(va != vb)})
		}
		w.Flush()
		return w.Error()
	default:
		tw := tabwriter.NewWriter(out, 2, 4, 2, ' ', 0)
		fmt.Fprintf(tw, "ID\tA: %s\t\t\tB: %s\t\t\tCHANGE\n", label(ca), label(cb))
		fmt.Fprintln(tw, "\tRANK\tVERDICT\tX_eq\tRANK\tVERDICT\tX_eq\t")
		for i := range a {
			rb := resB[a[i].item.Line]
			va, _, xa, _ := cell(&a[i])
			vb, _, xb, _ := cell(rb)
			ch := ""
			if va != vb {
				ch = "verdict changes"
			}
			fmt.Fprintf(tw, "%s\t%d\t%s\t%s\t%d\t%s\t%s\t%s\n", a[i].item.ID, i+1, va, xa, rankB[a[i].item.Line], vb, xb, ch)
		}
		return tw.Flush()
	}
}
