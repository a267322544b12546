package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"mime/multipart"
	"net/http"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
)

func submitCmd() *cobra.Command {
	var cf conditionFlags
	var server, apiKey, output, format, inFormat, idField, idemKey string
	var poll time.Duration
	cmd := &cobra.Command{
		Use:   "submit --server URL [flags] FILE|-",
		Short: "Send a file to a running ringsieve as a job, follow it, and write the ranked results",
		Args:  cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if _, err := cf.conditions(); err != nil {
				return err
			}
			if format != "csv" && format != "jsonl" && format != "json" {
				return fmt.Errorf("--format must be csv, jsonl or json")
			}
			f, err := openInput(cmd, args[0])
			if err != nil {
				return err
			}
			content, err := io.ReadAll(f)
			f.Close()
			if err != nil {
				return err
			}
			if apiKey == "" {
				apiKey = os.Getenv("RINGSIEVE_API_KEY")
			}
			fields := map[string]string{
				"temperature_c": strconv.FormatFloat(cf.tempC, 'g', -1, 64),
				"catalyst":      cf.catalyst,
				"format":        inFormat,
				"id_field":      idField,
			}
			if cf.bulk {
				fields["bulk"] = "true"
			} else {
				fields["monomer_conc_mol_l"] = strconv.FormatFloat(cf.concMolL, 'g', -1, 64)
			}
			body, ctype, err := multipartBody(filepath.Base(args[0]), content, fields)
			if err != nil {
				return err
			}
			if idemKey == "" {
				// the same file under the same conditions is the same job: a rerun resumes it
				h := sha256.Sum256(append(append([]byte{}, content...), []byte(fmt.Sprint(fields))...))
				idemKey = "submit-" + hex.EncodeToString(h[:12])
			}
			base := strings.TrimRight(server, "/")
			client := &http.Client{Timeout: 5 * time.Minute}
			req, _ := http.NewRequestWithContext(cmd.Context(), http.MethodPost, base+"/v1/jobs", bytes.NewReader(body))
			req.Header.Set("Content-Type", ctype)
			req.Header.Set("Idempotency-Key", idemKey)
			if apiKey != "" {
				req.Header.Set("X-API-Key", apiKey)
			}
			var created struct {
				ID          string `json:"id"`
				Total       int    `json:"total"`
				InputErrors []struct {
					Line    int    `json:"line"`
					Message string `json:"message"`
				} `json:"input_errors"`
			}
			if err := doJSON(client, req, http.StatusAccepted, &created); err != nil {
				return err
			}
			errw := cmd.ErrOrStderr()
			for _, e := range created.InputErrors {
				fmt.Fprintf(errw, "skipped line %d: %s\n", e.Line, e.Message)
			}
			var bar *progressbar.ProgressBar
			if isTerminal(errw) {
				bar = progressbar.NewOptions(created.Total, progressbar.OptionSetWriter(errw), progressbar.OptionSetDescription("job "+created.ID),
					progressbar.OptionShowCount(), progressbar.OptionClearOnFinish())
			}
			for {
				var st struct {
					Status string `json:"status"`
					Done   int    `json:"done"`
					Total  int    `json:"total"`
					Error  string `json:"error"`
				}
				req, _ := http.NewRequestWithContext(cmd.Context(), http.MethodGet, base+"/v1/jobs/"+created.ID, nil)
				if apiKey != "" {
					req.Header.Set("X-API-Key", apiKey)
				}
				if err := doJSON(client, req, http.StatusOK, &st); err != nil {
					return err
				}
				if bar != nil {
					bar.Set(st.Done)
				}
				if st.Status == "done" {
					break
				}
				if st.Status == "failed" || st.Status == "canceled" {
					return fmt.Errorf("job %s %s %s", created.ID, st.Status, st.Error)
				}
				select {
				case <-cmd.Context().Done():
					return fmt.Errorf("interrupted; the job %s goes on: fetch %s/v1/jobs/%s/results later", created.ID, base, created.ID)
				case <-time.After(poll):
				}
			}
			if bar != nil {
				bar.Finish()
			}
			req, _ = http.NewRequestWithContext(cmd.Context(), http.MethodGet, base+"/v1/jobs/"+created.ID+"/results?format="+format+"&limit=5000", nil)
			if apiKey != "" {
				req.Header.Set("X-API-Key", apiKey)
			}
			resp, err := client.Do(req)
			if err != nil {
				return err
			}
			defer resp.Body.Close()
			if resp.StatusCode != http.StatusOK {
				b, _ := io.ReadAll(resp.Body)
				return fmt.Errorf("results: %s: %s", resp.Status, b)
			}
			var out io.Writer = cmd.OutOrStdout()
			if output != "" && output != "-" {
				of, err := os.Create(output)
				if err != nil {
					return err
				}
				defer of.Close()
				out = of
			}
			_, err = io.Copy(out, resp.Body)
			if err == nil && output != "" && output != "-" {
				fmt.Fprintf(errw, "job %s: %d items ranked into %s\n", created.ID, created.Total, output)
			}
			return err
		},
	}
	cf.register(cmd)
	fl := cmd.Flags()
	fl.StringVar(&server, "server", "http://127.0.0.1:8080", "ringsieve base URL")
	fl.StringVar(&apiKey, "api-key", "", "API key (env RINGSIEVE_API_KEY)")
	fl.StringVarP(&output, "output", "o", "", "write the ranked results to this file (default standard output)")
	fl.StringVar(&format, "format", "csv", "results: csv, jsonl or json (first page)")
	fl.StringVar(&inFormat, "input-format", "", "input: smiles, csv or sdf (default: detected by the server)")
	fl.StringVar(&idField, "id-field", "", "SDF data field (or CSV column) that holds the id")
	fl.StringVar(&idemKey, "idempotency-key", "", "key for safe retries (default: derived from the file and conditions)")
	fl.DurationVar(&poll, "poll", 500*time.Millisecond, "status poll interval")
	return cmd
}

func multipartBody(name string, content []byte, fields map[string]string) ([]byte, string, error) {
	var buf bytes.Buffer
	w := multipart.NewWriter(&buf)
	for k, v := range fields {
		if v == "" {
			continue
		}
		if err := w.WriteField(k, v); err != nil {
			return nil, "", err
		}
	}
	fw, err := w.CreateFormFile("file", name)
	if err != nil {
		return nil, "", err
	}
	if _, err := fw.Write(content); err != nil {
		return nil, "", err
	}
	if err := w.Close(); err != nil {
		return nil, "", err
	}
	return buf.Bytes(), w.FormDataContentType(), nil
}

func doJSON(client *http.Client, req *http.Request, want int, v any) error {
	resp, err := client.Do(req)
	if err != nil {
		return err
	}
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	if err != nil {
		return err
	}
	if resp.StatusCode != want && !(want == http.StatusAccepted && resp.StatusCode == http.StatusOK) {
		var p struct {
			Title  string `json:"title"`
			Detail string `json:"detail"`
		}
		if json.Unmarshal(b, &p) == nil && p.Detail != "" {
			return fmt.Errorf("%s %s: %s: %s", req.Method, req.URL.Path, p.Title, p.Detail)
		}
		return fmt.Errorf("%s %s: %s", req.Method, req.URL.Path, resp.Status)
	}
	return json.Unmarshal(b, v)
}
