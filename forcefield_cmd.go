package main

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"ringsieve/screening"
	"ringsieve/screening/molfile"
)

// forcefieldCmd is `ringsieve forcefield energy|conformers` (contract, "Force field").
func forcefieldCmd() *cobra.Command {
	cmd := &cobra.Command{Use: "forcefield", Short: "MMFF94 energies and conformer searches"}
	cmd.AddCommand(energyCmd(), conformersCmd())
	return cmd
}

func energyCmd() *cobra.Command {
	var variant string
	cmd := &cobra.Command{
		Use:   "energy [--variant mmff94|mmff94s] FILE.sdf|-",
		Short: "Force-field energy of each SD record at its own coordinates (one JSON line per record)",
		Long: "Types each record with MMFF94 (or MMFF94s) and prints the energy at the geometry given,\n" +
			"nothing moved: the total and the seven terms in kcal/mol and the atom types. Every hydrogen\n" +
			"must be written as an atom. A record that cannot be read or typed prints {\"record\": n,\n" +
			"\"error\": ...}; the command then exits with status 2.",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			v, err := screening.ParseVariant(variant)
			if err != nil {
				return fmt.Errorf("--variant: %w", err)
			}
			in, err := openInput(cmd, args[0])
			if err != nil {
				return err
			}
			defer in.Close()
			out := bufio.NewWriter(cmd.OutOrStdout())
			defer out.Flush()
			enc := json.NewEncoder(out)
			n, failed := 0, 0
			err = molfile.ReadSD(in, func(rec molfile.SDRecord) error {
				n++
				text, ok := rec.Molfile()
				var line any
				if !ok {
					failed++
					line = map[string]any{"record": n, "error": fmt.Sprintf("line %d: record has no M  END line", rec.Start)}
				} else if r, err := screening.MolfileEnergy(text, v); err != nil {
					failed++
					line = map[string]any{"record": n, "name": strings.TrimSpace(rec.Lines[0]), "error": err.Error()}
				} else {
					line = struct {
						Record int `json:"record"`
						*screening.EnergyRecord
					}{n, r}
				}
				return enc.Encode(line)
			})
			if err != nil {
				return err
			}
			fmt.Fprintf(cmd.ErrOrStderr(), "evaluated %d, failed %d\n", n, failed)
			if failed > 0 {
				return rowsFailed
			}
			return nil
		},
	}
	cmd.Flags().StringVar(&variant, "variant", "mmff94", "force field: mmff94 or mmff94s")
	return cmd
}

func conformersCmd() *cobra.Command {
	var (
		variant, format string
		maxN            int
		seed            uint64
		budget          int
	)
	cmd := &cobra.Command{
		Use:   "conformers [--max N] [--format sdf|jsonl] SMILES|FILE",
		Short: "Lowest-energy conformers (3-D, hydrogens explicit) from a conformer search",
		Long: "Searches the conformers of a structure with MMFF94 and prints the lowest ones. The argument\n" +
			"is a SMILES, or a file of SMILES lines or SD records (\"-\" reads standard input). Stereo\n" +
			"comes from the SMILES marks, or from a 3-D molfile's coordinates. --format sdf (default)\n" +
			"prints each conformer as an SD record with its energy; jsonl one line per structure with\n" +
			"smiles, min_energy_kcal_mol and conformers (distinct minima found).",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			v, err := screening.ParseVariant(variant)
			if err != nil {
				return fmt.Errorf("--variant: %w", err)
			}
			if format != "sdf" && format != "jsonl" {
				return fmt.Errorf("--format: %q is not sdf or jsonl", format)
			}
			if maxN < 1 || maxN > screening.MaxConformersPerRequest {
				return fmt.Errorf("--max: must be between 1 and %d", screening.MaxConformersPerRequest)
			}
			reqs, err := conformerInputs(cmd, args[0])
			if err != nil {
				return err
			}
			out := bufio.NewWriter(cmd.OutOrStdout())
			defer out.Flush()
			failed := 0
			for _, req := range reqs {
				req.Max, req.Variant, req.Seed = maxN, v, seed
				req.Budget.MaxMinimizations = budget
				set, err := screening.Conformers(cmd.Context(), req)
				if err != nil {
					if errors.Is(err, cmd.Context().Err()) && cmd.Context().Err() != nil {
						return err
					}
					failed++
					name := req.SMILES
					if name == "" {
						name = "record " + strconv.Itoa(failed)
					}
					fmt.Fprintf(cmd.ErrOrStderr(), "%s: %v\n", name, err)
					if format == "jsonl" {
						b, _ := json.Marshal(map[string]string{"smiles": req.SMILES, "error": err.Error()})
						fmt.Fprintf(out, "%s\n", b)
					}
					continue
				}
				if err := writeConformers(out, format, set); err != nil {
					return err
				}
				out.Flush()
			}
			fmt.Fprintf(cmd.ErrOrStderr(), "searched %d, failed %d\n", len(reqs), failed)
			if failed > 0 {
				return rowsFailed
			}
			return nil
		},
	}
	fl := cmd.Flags()
	fl.IntVar(&maxN, "max", 5, "conformers to print per structure (lowest first)")
	fl.StringVar(&format, "format", "sdf", "output: sdf or jsonl")
	fl.StringVar(&variant, "variant", "mmff94", "force field: mmff94 or mmff94s")
	fl.Uint64Var(&seed, "seed", 1, "random seed (the same seed repeats the search)")
	fl.IntVar(&budget, "max-minimizations", 0, "minimizations per structure (0: the default budget)")
	return cmd
}

// conformerInputs reads the argument: an existing file of SD records or SMILES lines ("-" is
// standard input), else one SMILES.
func conformerInputs(cmd *cobra.Command, arg string) ([]screening.ConformerRequest, error) {
	if arg != "-" {
		if _, err := os.Stat(arg); err != nil {
			return []screening.ConformerRequest{{SMILES: arg}}, nil
		}
	}
	in, err := openInput(cmd, arg)
	if err != nil {
		return nil, err
	}
	defer in.Close()
	data, err := io.ReadAll(io.LimitReader(in, 64<<20))
	if err != nil {
		return nil, err
	}
	text := string(data)
	var out []screening.ConformerRequest
	if strings.Contains(text, "M  END") {
		err := molfile.ReadSD(strings.NewReader(text), func(rec molfile.SDRecord) error {
			mf, ok := rec.Molfile()
			if !ok {
				return fmt.Errorf("line %d: record has no M  END line", rec.Start)
			}
			out = append(out, screening.ConformerRequest{Molfile: mf})
			return nil
		})
		return out, err
	}
	for _, l := range strings.Split(text, "\n") {
		f := strings.Fields(l)
		if len(f) == 0 || strings.HasPrefix(f[0], "#") {
			continue
		}
		out = append(out, screening.ConformerRequest{SMILES: f[0]})
	}
	return out, nil
}

func writeConformers(w io.Writer, format string, set *screening.ConformerSet) error {
	if format == "jsonl" {
		line := struct {
			*screening.ConformerSet
			Energies []float64 `json:"energies_kcal_mol"`
		}{ConformerSet: set}
		for _, c := range set.Conformers {
			line.Energies = append(line.Energies, c.EnergyKcalMol)
		}
		b, err := json.Marshal(line)
		if err != nil {
			return err
		}
		_, err = fmt.Fprintf(w, "%s\n", b)
		return err
	}
	for k, c := range set.Conformers {
		if _, err := fmt.Fprintf(w, "%s> <energy_kcal_mol>\n%.4f\n\n> <variant>\n%s\n\n> <rank>\n%d\n\n$$$$\n",
			c.Molfile, c.EnergyKcalMol, set.Variant, k+1); err != nil {
			return err
		}
	}
	return nil
}
