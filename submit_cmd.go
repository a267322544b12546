package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"mime/multipart"
	"net"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"syscall"
	"time"

	"github.com/schollz/progressbar/v3"
	"github.com/spf13/cobra"
)

func submitCmd(getenv func(string) string) *cobra.Command {
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
			if apiKey == "" {
				apiKey = getenv("RINGSIEVE_API_KEY")
			}
			cl, err := newClient(server, apiKey)
			if err != nil {
				return err
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
			ctx := cmd.Context()
			var created struct {
				ID          string `json:"id"`
				Total       int    `json:"total"`
				InputErrors []struct {
					Line    int    `json:"line"`
					Message string `json:"message"`
				} `json:"input_errors"`
			}
			if err := cl.json(ctx, http.MethodPost, "/v1/jobs", bytes.NewReader(body), ctype, idemKey, &created); err != nil {
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
			var st struct {
				Status string `json:"status"`
				Done   int    `json:"done"`
				Failed int    `json:"failed"`
				Total  int    `json:"total"`
				Error  string `json:"error"`
			}
			// with a progress bar the status is read every poll interval; without one the server
			// holds each reading until the job ends or waitSeconds pass (GET …?wait=N), so the
			// results are fetched the moment the job is done
			status := "/v1/jobs/" + created.ID
			if bar == nil {
				status += "?wait=" + strconv.Itoa(waitSeconds)
			}
			for {
				asked := time.Now()
				if err := cl.json(ctx, http.MethodGet, status, nil, "", "", &st); err != nil {
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
				pause := poll
				if bar == nil && time.Since(asked) >= time.Second {
					pause = 0 // the server waited: ask again at once
				}
				select {
				case <-ctx.Done():
					return fmt.Errorf("interrupted; the job %s goes on: fetch %s/v1/jobs/%s/results later", created.ID, cl.base, created.ID)
				case <-time.After(pause):
				}
			}
			if bar != nil {
				bar.Finish()
			}
			resp, err := cl.do(ctx, http.MethodGet, "/v1/jobs/"+created.ID+"/results?format="+format+"&limit=5000", nil, "", "")
			if err != nil {
				return err
			}
			defer resp.Body.Close()
			var out io.Writer = cmd.OutOrStdout()
			if output != "" && output != "-" {
				of, err := os.Create(output)
				if err != nil {
					return err
				}
				defer of.Close()
				out = of
			}
			if _, err := io.Copy(out, resp.Body); err != nil {
				return fmt.Errorf("download of the results of job %s broke off: %w", created.ID, err)
			}
			if output != "" && output != "-" {
				fmt.Fprintf(errw, "job %s: %d items ranked into %s\n", created.ID, created.Total, output)
			}
			failed := st.Failed + len(created.InputErrors)
			fmt.Fprintf(errw, "screened %d, failed %d\n", st.Done-st.Failed, failed)
			if failed > 0 {
				return rowsFailed
			}
			return nil
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

// waitSeconds is how long submit asks the server to hold a status reading for a job to end
// (GET /v1/jobs/{id}?wait=N; the server takes at most 60).
const waitSeconds = 30

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

// client talks to a running ringsieve service.
type client struct {
	base   string
	apiKey string
	http   *http.Client
}

func newClient(server, apiKey string) (*client, error) {
	u, err := url.Parse(server)
	if err != nil || (u.Scheme != "http" && u.Scheme != "https") || u.Host == "" {
		return nil, fmt.Errorf("--server %q is not a service address: give a URL such as http://127.0.0.1:8080", server)
	}
	return &client{base: strings.TrimRight(server, "/"), apiKey: apiKey, http: &http.Client{Timeout: 5 * time.Minute}}, nil
}

// do sends a request and returns the response when its status is 2xx; any other status is an
// error with the problem's title and detail, and a network failure is said in words.
func (c *client) do(ctx context.Context, method, path string, body io.Reader, ctype, idemKey string) (*http.Response, error) {
	req, err := http.NewRequestWithContext(ctx, method, c.base+path, body)
	if err != nil {
		return nil, err
	}
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	if idemKey != "" {
		req.Header.Set("Idempotency-Key", idemKey)
	}
	if c.apiKey != "" {
		req.Header.Set("X-API-Key", c.apiKey)
	}
	resp, err := c.http.Do(req)
	if err != nil {
		return nil, c.unreachable(err)
	}
	if resp.StatusCode/100 == 2 {
		return resp, nil
	}
	defer resp.Body.Close()
	b, _ := io.ReadAll(io.LimitReader(resp.Body, 64<<10)) // the body only enriches the message
	var p struct {
		Title  string `json:"title"`
		Detail string `json:"detail"`
	}
	if json.Unmarshal(b, &p) == nil && p.Detail != "" {
		return nil, fmt.Errorf("the service refused %s %s: %s: %s", method, req.URL.Path, p.Title, p.Detail)
	}
	return nil, fmt.Errorf("the service answered %s %s with %s", method, req.URL.Path, resp.Status)
}

// json is do with the answer decoded into v.
func (c *client) json(ctx context.Context, method, path string, body io.Reader, ctype, idemKey string, v any) error {
	resp, err := c.do(ctx, method, path, body, ctype, idemKey)
	if err != nil {
		return err
	}
	defer resp.Body.Close()
	if err := json.NewDecoder(resp.Body).Decode(v); err != nil {
		return fmt.Errorf("the service's answer to %s %s could not be read: %w", method, path, err)
	}
	return nil
}

// unreachable says in words why the service could not be reached.
func (c *client) unreachable(err error) error {
	var ne net.Error
	var dns *net.DNSError
	switch {
	case errors.Is(err, syscall.ECONNREFUSED):
		return fmt.Errorf("no ringsieve service answers at %s (connection refused): start one with `ringsieve serve` or give --server", c.base)
	case errors.As(err, &dns):
		return fmt.Errorf("the host of %s is unknown (%s): check --server", c.base, dns.Name)
	case errors.As(err, &ne) && ne.Timeout():
		return fmt.Errorf("the ringsieve service at %s did not answer in time", c.base)
	}
	return fmt.Errorf("could not reach the ringsieve service at %s: %w", c.base, err)
}
