package main

import (
	"bufio"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"ringsieve/screening"
	"ringsieve/screening/depict"
)

func depictCmd() *cobra.Command {
	format, width, height, noHighlight := "svg", 300, 200, false
	cmd := &cobra.Command{
		Use:   "depict [--format svg|molfile] SMILES|FILE|-",
		Short: "Draw structures in 2-D: an SVG picture, or 2-D molfiles with wedge bonds (a file of SMILES lines gives an SD file)",
		Args:  cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if format != "svg" && format != "molfile" {
				return fmt.Errorf("--format is svg or molfile")
			}
			out := bufio.NewWriter(cmd.OutOrStdout())
			defer out.Flush()
			lines, single, err := depictInput(args[0], cmd.InOrStdin())
			if err != nil {
				return err
			}
			if format == "svg" && !single {
				return fmt.Errorf("SVG takes one SMILES; use --format molfile for a file")
			}
			failed := 0
			for _, l := range lines {
				f := strings.Fields(l.text)
				if len(f) == 0 || strings.HasPrefix(f[0], "#") {
					continue
				}
				d, err := screening.Depict(f[0])
				if err != nil {
					failed++
					fmt.Fprintf(cmd.ErrOrStderr(), "line %d: %v\n", l.no, err)
					continue
				}
				if format == "svg" {
					o := depict.SVGOptions{Width: width, Height: height, Title: f[0]}
					if !noHighlight && d.OpeningBond >= 0 {
						bd := d.Mol.Bonds[d.OpeningBond]
						o.HighlightBonds, o.HighlightAtoms = []int{d.OpeningBond}, []int{bd.A, bd.B}
					}
					out.Write(d.SVG(o))
					out.WriteString("\n")
					continue
				}
				title := f[0]
				if len(f) > 1 {
					title = f[1]
				}
				if err := d.WriteMolfile(out, title); err != nil {
					return err
				}
				if !single {
					fmt.Fprintf(out, "> <smiles>\n%s\n\n> <stereo_signature>\n%s\n\n$$$$\n", f[0], depict.StereoSignature(d.Layout))
				}
			}
			if failed > 0 {
				out.Flush()
				return rowsFailed
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.StringVar(&format, "format", format, "svg (one SMILES) or molfile (one SMILES, or an SD file for a file of SMILES lines)")
	f.IntVar(&width, "width", width, "SVG width in pixels")
	f.IntVar(&height, "height", height, "SVG height in pixels")
	f.BoolVar(&noHighlight, "no-highlight", false, "do not mark the ring olefin that opens")
	return cmd
}

type numberedLine struct {
	no   int
	text string
}

// depictInput reads the argument: "-" (standard input), an existing file of SMILES lines, or
// one SMILES. single is true for one SMILES given on the command line.
func depictInput(arg string, stdin io.Reader) ([]numberedLine, bool, error) {
	var r io.Reader
	switch {
	case arg == "-":
		r = stdin
	default:
		f, err := os.Open(arg)
		if err != nil {
			return []numberedLine{{1, arg}}, true, nil
		}
		defer f.Close()
		r = f
	}
	var out []numberedLine
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for n := 1; sc.Scan(); n++ {
		out = append(out, numberedLine{n, sc.Text()})
	}
	return out, false, sc.Err()
}
