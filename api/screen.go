package api

import (
	"context"
	"encoding/json"
	"fmt"
	"net/http"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/gin-gonic/gin"

	"ringsieve/data"
	"ringsieve/screening"
	"ringsieve/screening/batch"
	"ringsieve/screening/thermo"
	"ringsieve/screening/units"
)

// ConditionsIn are the reaction conditions of a request; every field is optional (defaults:
// 25 °C, 1.0 mol/L, ru-nhc).
type ConditionsIn struct {
	TemperatureC    *float64 `json:"temperature_c,omitempty" example:"25"`
	TemperatureK    *float64 `json:"temperature_k,omitempty"`
	MonomerConcMolL *float64 `json:"monomer_conc_mol_l,omitempty" example:"1.0"`
	// Bulk screens the neat monomer: the concentration is estimated from the structure.
	Bulk     bool   `json:"bulk,omitempty"`
	Catalyst string `json:"catalyst,omitempty" enums:"ru-phosphine,ru-nhc,ru-pyridine,mo-w-imido,classical" example:"ru-nhc"`
	// ThermoMethod: auto (default) adds the force-field strain difference from the parent ring
	// system where the structure differs from it; table is the fast ring-table tier; forcefield
	// always adds the difference.
	ThermoMethod string `json:"thermo_method,omitempty" enums:"auto,table,forcefield" example:"auto"`
}

// toConditions validates the conditions (errors are *screening.FieldError with the field).
func (ci *ConditionsIn) toConditions() (screening.Conditions, error) {
	c := screening.DefaultConditions()
	if ci == nil {
		return c, nil
	}
	if ci.TemperatureC != nil && ci.TemperatureK != nil {
		return c, &screening.FieldError{Field: "conditions.temperature_k", Msg: "give temperature_c or temperature_k, not both"}
	}
	if ci.TemperatureC != nil {
		t, err := units.TempFromCelsius(*ci.TemperatureC)
		if err != nil {
			return c, units.Refield(err, "conditions.temperature_c")
		}
		c.Temp = t
	}
	if ci.TemperatureK != nil {
		t, err := units.NewTempK(*ci.TemperatureK)
		if err != nil {
			return c, units.Refield(err, "conditions.temperature_k")
		}
		c.Temp = t
	}
	if ci.MonomerConcMolL != nil {
		if ci.Bulk {
			return c, &screening.FieldError{Field: "conditions.bulk", Msg: "give monomer_conc_mol_l or bulk, not both"}
		}
		v, err := units.NewConcMolL(*ci.MonomerConcMolL)
		if err != nil {
			return c, units.Refield(err, "conditions.monomer_conc_mol_l")
		}
		c.Conc = v
	}
	c.Bulk = ci.Bulk
	if ci.Catalyst != "" {
		cat, err := units.ParseCatalystClass(ci.Catalyst)
		if err != nil {
			return c, units.Refield(err, "conditions.catalyst")
		}
		c.Catalyst = cat
	}
	tm, err := units.ParseThermoMethod(ci.ThermoMethod)
	if err != nil {
		return c, units.Refield(err, "conditions.thermo_method")
	}
	c.ThermoMethod = tm
	return c, nil
}

// bind decodes a JSON body into req and validates the conditions that conds picks from it; on
// failure it has already answered with a problem and ok is false.
func bind[T any](c *gin.Context, req *T, conds func(*T) *ConditionsIn) (cond screening.Conditions, ok bool) {
	if err := decodeJSON(c, req); err != nil {
		fail(c, err)
		return cond, false
	}
	cond, err := conds(req).toConditions()
	if err != nil {
		fail(c, err)
		return cond, false
	}
	return cond, true
}

// MonomerSource names exactly one monomer: a SMILES, a descriptor record, or a stored monomer.
type MonomerSource struct {
	SMILES      string                 `json:"smiles,omitempty" example:"C1=CC2CCC1C2"`
	Descriptors *screening.Descriptors `json:"descriptors,omitempty"`
	MonomerID   string                 `json:"monomer_id,omitempty"`
}

// ScreenRequest is the body of POST /v1/screen.
type ScreenRequest struct {
	MonomerSource
	Conditions *ConditionsIn `json:"conditions,omitempty"`
	// Save stores the result in the history of the stored monomer (monomer_id only).
	Save bool `json:"save,omitempty"`
}

// ScreenResponse is a screening result, with the saved result's id when saved.
type ScreenResponse struct {
	screening.Result
	MonomerID     string `json:"monomer_id,omitempty"`
	SavedResultID int64  `json:"saved_result_id,omitempty"`
}

// source resolves a request's monomer source to what screening takes (a stored monomer is
// read from the store).
func (s *Server) source(ctx context.Context, src MonomerSource) (screening.Source, error) {
	n := 0
	if strings.TrimSpace(src.SMILES) != "" {
		n++
	}
	if src.Descriptors != nil {
		n++
	}
	if src.MonomerID != "" {
		n++
	}
	if n != 1 {
		return screening.Source{}, &screening.FieldError{Field: "smiles", Msg: "give exactly one monomer source: smiles, descriptors or monomer_id"}
	}
	if src.MonomerID != "" {
		m, err := s.store.GetMonomer(ctx, src.MonomerID)
		if err != nil {
			return screening.Source{}, err
		}
		return data.SourceOf(m)
	}
	return screening.Source{SMILES: src.SMILES, Descriptors: src.Descriptors}, nil
}

// screenSource screens one monomer source under conditions c.
func (s *Server) screenSource(ctx context.Context, src MonomerSource, c screening.Conditions) (screening.Result, error) {
	in, err := s.source(ctx, src)
	if err != nil {
		return screening.Result{}, err
	}
	if _, bounded := ctx.Deadline(); !bounded {
		ctx = screening.WithForceFieldDeadline(ctx, time.Now().Add(s.cfg.SyncForceField))
	}
	r, err := screening.ScreenContext(ctx, in, c)
	s.count(r, err)
	return r, err
}

func (s *Server) count(r screening.Result, err error) {
	if err != nil {
		s.metrics.screenings.WithLabelValues("error").Inc()
		return
	}
	s.metrics.screenings.WithLabelValues(r.Verdict).Inc()
}

// screen godoc
//
//	@Summary		Screen one monomer
//	@Description	Derives the ROMP descriptors (from SMILES, a descriptor record or a stored monomer), estimates ΔH_p and ΔS_p°, evaluates ΔG_p, T_c, [M]eq and equilibrium conversion at the conditions, and returns a verdict with reasons and cautions.
//	@Tags			screening
//	@Accept			json
//	@Produce		json
//	@Param			request	body		ScreenRequest	true	"monomer source and conditions"
//	@Success		200		{object}	ScreenResponse
//	@Failure		400		{object}	Problem	"malformed JSON or unknown field"
//	@Failure		404		{object}	Problem	"monomer_id not found"
//	@Failure		422		{object}	Problem	"invalid SMILES (with position) or out-of-range value"
//	@Router			/v1/screen [post]
func (s *Server) screen(c *gin.Context) {
	var req ScreenRequest
	cond, ok := bind(c, &req, func(r *ScreenRequest) *ConditionsIn { return r.Conditions })
	if !ok {
		return
	}
	if req.Save && req.MonomerID == "" {
		fail(c, &screening.FieldError{Field: "save", Msg: "save needs monomer_id (results are kept in a stored monomer's history)"})
		return
	}
	r, err := s.screenSource(c.Request.Context(), req.MonomerSource, cond)
	if err != nil {
		fail(c, err)
		return
	}
	resp := ScreenResponse{Result: r, MonomerID: req.MonomerID}
	if req.Save {
		condJSON, err := json.Marshal(r.Conditions)
		if err != nil {
			fail(c, err)
			return
		}
		resJSON, err := r.AppendJSON(nil)
		if err != nil {
			fail(c, err)
			return
		}
		saved, err := s.store.SaveResult(c.Request.Context(), data.SavedResult{MonomerID: req.MonomerID, Conditions: condJSON,
			Verdict: r.Verdict, Score: r.Score, Result: resJSON, EngineVersion: r.EngineVersion})
		if err != nil {
			fail(c, err)
			return
		}
		resp.SavedResultID = saved.ID
	}
	writeScreenResponse(c, &resp)
}

// respBufs holds response buffers for writeScreenResponse.
var respBufs = sync.Pool{New: func() any { b := make([]byte, 0, 8<<10); return &b }}

// writeScreenResponse writes resp as c.JSON would (the same bytes and content type), with the
// result encoded by Result.AppendJSON instead of by reflection.
func writeScreenResponse(c *gin.Context, resp *ScreenResponse) {
	bp := respBufs.Get().(*[]byte)
	defer func() {
		if cap(*bp) <= 64<<10 {
			respBufs.Put(bp)
		}
	}()
	b, err := resp.Result.AppendJSON((*bp)[:0])
	if err != nil {
		fail(c, err)
		return
	}
	// the response's own members follow the embedded result's
	b = b[:len(b)-1]
	if resp.MonomerID != "" {
		b = append(b, `,"monomer_id":`...)
		mb, _ := json.Marshal(resp.MonomerID)
		b = append(b, mb...)
	}
	if resp.SavedResultID != 0 {
		b = append(b, `,"saved_result_id":`...)
		b = strconv.AppendInt(b, resp.SavedResultID, 10)
	}
	b = append(b, '}')
	*bp = b
	c.Data(http.StatusOK, "application/json; charset=utf-8", b)
}

// BatchItem is one monomer of a batch, with the caller's identifier.
type BatchItem struct {
	ID string `json:"id" example:"a1"`
	MonomerSource
}

// BatchRequest is the body of POST /v1/screen/batch and of JSON job submissions.
type BatchRequest struct {
	Items      []BatchItem   `json:"items"`
	Conditions *ConditionsIn `json:"conditions,omitempty"`
}

// BatchResult is one ranked result: the screen result, or error in its place.
type BatchResult struct {
	ID   string `json:"id"`
	Rank int    `json:"rank"`
	*screening.Result
	Error *Problem `json:"error,omitempty"`
	seq   int      // submission position
}

// BatchResponse lists results by rank (the batch package's ranking rule), failed items last.
type BatchResponse struct {
	Results []BatchResult `json:"results"`
}

// batch godoc
//
//	@Summary		Screen and rank many monomers
//	@Description	Screens every item synchronously and returns them ranked by score (ties broken by ΔG_p). An item that cannot be screened carries a problem in "error" and ranks after all screened items; the batch itself still succeeds.
//	@Tags			screening
//	@Accept			json
//	@Produce		json
//	@Param			request	body		BatchRequest	true	"items and shared conditions"
//	@Success		200		{object}	BatchResponse
//	@Failure		400		{object}	Problem
//	@Failure		422		{object}	Problem	"invalid conditions or too many items"
//	@Router			/v1/screen/batch [post]
func (s *Server) batch(c *gin.Context) {
	if err := checkJSONType(c); err != nil {
		fail(c, err)
		return
	}
	body, err := readBody(c)
	if err != nil {
		fail(c, err)
		return
	}
	// decoded as a stream: the item limit is checked while reading, so an oversized list never
	// sits in memory as Go values
	var req BatchRequest
	condIn, n, err := decodeBatch(body, s.cfg.BatchLimit,
		func(limit int) string {
			return fmt.Sprintf("more than the synchronous limit of %d items: submit a job (POST /v1/jobs)", limit)
		},
		func(_ int, it BatchItem) error { req.Items = append(req.Items, it); return nil })
	if err != nil {
		fail(c, err)
		return
	}
	cond, err := condIn.toConditions()
	if err != nil {
		fail(c, err)
		return
	}
	if n == 0 {
		fail(c, &screening.FieldError{Field: "items", Msg: "give at least one item"})
		return
	}
	results := s.screenItems(c.Request.Context(), req.Items, cond)
	if c.Request.Context().Err() != nil {
		return // the client has gone: nothing to answer
	}
	c.JSON(http.StatusOK, BatchResponse{Results: results})
}

// screenItems screens items on the worker pool (input order kept) and returns them ranked;
// failures become problems in place. It stops early when the client goes away.
func (s *Server) screenItems(ctx context.Context, items []BatchItem, cond screening.Conditions) []BatchResult {
	rows := make([]batch.Row, len(items))
	// one force-field allowance for the whole batch: the rest of it uses the ring table
	ctx = screening.WithForceFieldDeadline(ctx, time.Now().Add(s.cfg.SyncForceField))
	batch.Map(ctx, len(items), 0, func(i int) {
		r, err := s.screenSource(ctx, items[i].MonomerSource, cond)
		rows[i] = batch.NewRow(i, r, err)
	})
	batch.Rank(rows)
	out := make([]BatchResult, len(rows))
	for k, row := range rows {
		it := items[row.Seq]
		id := it.ID
		if id == "" {
			id = fmt.Sprintf("%d", row.Seq+1)
		}
		out[k] = BatchResult{ID: id, Rank: k + 1, Result: row.Result, seq: row.Seq}
		if row.Err != nil {
			p := problemFor(units.PrefixField(row.Err, fmt.Sprintf("items[%d].", row.Seq)))
			out[k].Error = &p
		}
	}
	return out
}

// SweepRange is a temperature range in °C.
type SweepRange struct {
	FromC float64 `json:"from_c" example:"-20"`
	ToC   float64 `json:"to_c" example:"150"`
	StepC float64 `json:"step_c" example:"5"`
}

// SweepRequest is the body of POST /v1/sweep.
type SweepRequest struct {
	MonomerSource
	Conditions *ConditionsIn `json:"conditions,omitempty"`
	Sweep      *SweepRange   `json:"sweep,omitempty"`
}

// SweepResponse gives the thermodynamics used and one point per temperature.
type SweepResponse struct {
	Verdict string              `json:"verdict"`
	Thermo  *screening.Thermo   `json:"thermo"`
	Points  []thermo.SweepPoint `json:"points"`
}

// sweep godoc
//
//	@Summary		Temperature sweep of ΔG_p, [M]eq and equilibrium conversion
//	@Description	Screens the monomer at the conditions, then evaluates ΔG_p, [M]eq and equilibrium conversion from from_c to to_c (default −20 to 150 °C in 5 °C steps) at the same concentration, for plotting.
//	@Tags			screening
//	@Accept			json
//	@Produce		json
//	@Param			request	body		SweepRequest	true	"monomer source, conditions and range"
//	@Success		200		{object}	SweepResponse
//	@Failure		400		{object}	Problem
//	@Failure		422		{object}	Problem
//	@Router			/v1/sweep [post]
func (s *Server) sweep(c *gin.Context) {
	var req SweepRequest
	cond, ok := bind(c, &req, func(r *SweepRequest) *ConditionsIn { return r.Conditions })
	if !ok {
		return
	}
	rg := SweepRange{FromC: -20, ToC: 150, StepC: 5}
	if req.Sweep != nil {
		rg = *req.Sweep
	}
	r, err := s.screenSource(c.Request.Context(), req.MonomerSource, cond)
	if err != nil {
		fail(c, err)
		return
	}
	resp := SweepResponse{Verdict: r.Verdict, Thermo: r.Thermo, Points: []thermo.SweepPoint{}}
	if r.Thermo != nil {
		pts, err := thermo.Sweep(r.Thermo.DHkJmol, r.Thermo.DSJmolK, screening.ConcMolL(r.Thermo.MonomerConcMolL), rg.FromC, rg.ToC, rg.StepC)
		if err != nil {
			fail(c, err)
			return
		}
		resp.Points = pts
	}
	c.JSON(http.StatusOK, resp)
}

// RingTableRow is one row of the strain table as served.
type RingTableRow struct {
	Name                 string   `json:"name"`
	SMILES               string   `json:"smiles"`
	SkeletonKey          string   `json:"skeleton_key"`
	RingCorrectionHkJmol float64  `json:"ring_correction_h_kj_mol"`
	RingCorrectionSJmolK float64  `json:"ring_correction_s_j_mol_k"`
	UncertaintyHkJmol    float64  `json:"uncertainty_h_kj_mol"`
	UncertaintySJmolK    float64  `json:"uncertainty_s_j_mol_k"`
	MeasuredDHkJmol      *float64 `json:"measured_dh_kj_mol,omitempty"`
	MeasuredDSJmolK      *float64 `json:"measured_ds_j_mol_k,omitempty"`
	Evidence             string   `json:"evidence"`
	Source               string   `json:"source"`
	Note                 string   `json:"note,omitempty"`
}

// RingTableResponse lists the strain table and the fitted condensed-phase offsets.
type RingTableResponse struct {
	CondensedOffsetHkJmol            float64        `json:"condensed_offset_h_kj_mol"`
	CondensedOffsetHUncertaintyKJmol float64        `json:"condensed_offset_h_uncertainty_kj_mol"`
	CondensedOffsetSJmolK            float64        `json:"condensed_offset_s_j_mol_k"`
	CondensedOffsetSUncertaintyJmolK float64        `json:"condensed_offset_s_uncertainty_j_mol_k"`
	Rows                             []RingTableRow `json:"rows"`
	EngineVersion                    string         `json:"engine_version"`
	Note                             string         `json:"note"`
}

// ringTable godoc
//
//	@Summary	The ring-system strain table with sources
//	@Tags		screening
//	@Produce	json
//	@Success	200	{object}	RingTableResponse
//	@Router		/v1/tables/ring-systems [get]
func (s *Server) ringTable(c *gin.Context) {
	dh, udh, ds, uds := thermo.Offsets()
	resp := RingTableResponse{CondensedOffsetHkJmol: dh, CondensedOffsetHUncertaintyKJmol: udh, CondensedOffsetSJmolK: ds, CondensedOffsetSUncertaintyJmolK: uds,
		EngineVersion: screening.EngineVersion, Note: "ring corrections are ideal-gas Benson-type values at 298.15 K; 1 cal = 4.184 J"}
	for _, r := range thermo.TableRows() {
		resp.Rows = append(resp.Rows, RingTableRow{Name: r.Name, SMILES: r.SMILES, SkeletonKey: r.Key, RingCorrectionHkJmol: r.RSCH, RingCorrectionSJmolK: r.RSCS,
			UncertaintyHkJmol: r.UH, UncertaintySJmolK: r.US, MeasuredDHkJmol: r.AnchorDH, MeasuredDSJmolK: r.AnchorDS, Evidence: r.Evidence, Source: r.Source, Note: r.Note})
	}
	c.JSON(http.StatusOK, resp)
}
