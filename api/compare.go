package api

import (
	"fmt"
	"net/http"

	"github.com/gin-gonic/gin"

	"ringsieve/screening"
	"ringsieve/screening/judge"
	"ringsieve/screening/units"
)

// CompareRequest screens one list under two condition sets.
type CompareRequest struct {
	Items       []BatchItem   `json:"items"`
	ConditionsA *ConditionsIn `json:"conditions_a"`
	ConditionsB *ConditionsIn `json:"conditions_b"`
}

// CompareSide is one item's result under one condition set, with its rank in that set.
type CompareSide struct {
	Rank         int      `json:"rank"`
	Verdict      string   `json:"verdict,omitempty"`
	Score        float64  `json:"score"`
	DGkJmol      *float64 `json:"dg_kj_mol"`
	EqConversion *float64 `json:"eq_conversion"`
	CeilingTempK *float64 `json:"ceiling_temp_k"`
	MainReasons  string   `json:"main_reasons,omitempty"`
	Error        *Problem `json:"error,omitempty"`
}

// CompareRow is one item under both condition sets.
type CompareRow struct {
	ID             string      `json:"id"`
	A              CompareSide `json:"a"`
	B              CompareSide `json:"b"`
	VerdictChanges bool        `json:"verdict_changes"`
}

// CompareResponse lists the items in the order of set A's ranking.
type CompareResponse struct {
	ConditionsA screening.ConditionsOut `json:"conditions_a"`
	ConditionsB screening.ConditionsOut `json:"conditions_b"`
	Rows        []CompareRow            `json:"rows"`
}

func side(r BatchResult) CompareSide {
	s := CompareSide{Rank: r.Rank, Error: r.Error}
	if r.Result != nil {
		s.Verdict, s.Score, s.MainReasons = r.Verdict, r.Score, judge.MainReasons(r.Result)
		if t := r.Thermo; t != nil {
			dg, x := t.DGkJmol, t.EqConversion
			s.DGkJmol, s.EqConversion, s.CeilingTempK = &dg, &x, t.CeilingTempK
		}
	}
	return s
}

// compare godoc
//
//	@Summary		Screen one list under two condition sets, side by side
//	@Description	Ranks the items under conditions_a and under conditions_b (e.g. 25 °C and 60 °C) and returns them in the order of set A with both results; verdict_changes flags the items whose verdict differs.
//	@Tags			screening
//	@Accept			json
//	@Produce		json
//	@Param			request	body		CompareRequest	true	"items and two condition sets"
//	@Success		200		{object}	CompareResponse
//	@Failure		400		{object}	Problem
//	@Failure		422		{object}	Problem
//	@Router			/v1/screen/compare [post]
func (s *Server) compare(c *gin.Context) {
	var req CompareRequest
	if err := decodeJSON(c, &req); err != nil {
		fail(c, err)
		return
	}
	ca, err := req.ConditionsA.toConditions()
	if err != nil {
		fail(c, units.PrefixField(err, "conditions_a."))
		return
	}
	cb, err := req.ConditionsB.toConditions()
	if err != nil {
		fail(c, units.PrefixField(err, "conditions_b."))
		return
	}
	if len(req.Items) == 0 || len(req.Items) > s.cfg.BatchLimit {
		fail(c, &screening.FieldError{Field: "items", Msg: fmt.Sprintf("give 1 to %d items", s.cfg.BatchLimit)})
		return
	}
	a := s.screenItems(c.Request.Context(), req.Items, ca)
	b := s.screenItems(c.Request.Context(), req.Items, cb)
	bySeq := make(map[int]BatchResult, len(b))
	for _, r := range b {
		bySeq[r.seq] = r
	}
	resp := CompareResponse{ConditionsA: judge.OutOf(ca), ConditionsB: judge.OutOf(cb)}
	for _, r := range a {
		rb := bySeq[r.seq]
		row := CompareRow{ID: r.ID, A: side(r), B: side(rb)}
		row.VerdictChanges = row.A.Verdict != row.B.Verdict
		resp.Rows = append(resp.Rows, row)
	}
	c.JSON(http.StatusOK, resp)
}
