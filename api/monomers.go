package api

import (
	"encoding/json"
	"fmt"
	"net/http"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"ringsieve/data"
	"ringsieve/screening"
	"ringsieve/screening/describe"
)

// MonomerIn is the body of POST and PUT /v1/monomers: a name and at least one of SMILES or a
// descriptor record.
type MonomerIn struct {
	Name        string                 `json:"name" example:"MEM-07 exo-norbornene imide"`
	SMILES      string                 `json:"smiles,omitempty" example:"CN1C(=O)C2C3C=CC(C3)C2C1=O"`
	Descriptors *screening.Descriptors `json:"descriptors,omitempty"`
	Tags        []string               `json:"tags,omitempty" example:"membrane,round-3"`
	// AllowDuplicate stores the monomer even when another stored monomer has the same structure
	// (otherwise 409 naming it).
	AllowDuplicate bool `json:"allow_duplicate,omitempty"`
}

const (
	maxNameLen = 200
	maxTags    = 50
	maxTagLen  = 64
)

// validate checks the record; a SMILES must parse (422 with its position).
func (in *MonomerIn) validate() (data.Monomer, error) {
	in.Name = strings.TrimSpace(in.Name)
	if in.Name == "" || len(in.Name) > maxNameLen {
		return data.Monomer{}, &screening.FieldError{Field: "name", Msg: fmt.Sprintf("must be 1 to %d characters", maxNameLen)}
	}
	if in.SMILES == "" && in.Descriptors == nil {
		return data.Monomer{}, &screening.FieldError{Field: "smiles", Msg: "give smiles, descriptors, or both"}
	}
	if in.SMILES != "" {
		if _, err := describe.Describe(in.SMILES); err != nil {
			return data.Monomer{}, err
		}
	}
	var desc json.RawMessage
	if in.Descriptors != nil {
		d := *in.Descriptors
		if err := d.Validate(); err != nil {
			return data.Monomer{}, err
		}
		b, err := json.Marshal(in.Descriptors)
		if err != nil {
			return data.Monomer{}, err
		}
		desc = b
	}
	if len(in.Tags) > maxTags {
		return data.Monomer{}, &screening.FieldError{Field: "tags", Msg: fmt.Sprintf("at most %d tags", maxTags)}
	}
	for i, t := range in.Tags {
		if len(t) > maxTagLen || strings.ContainsAny(t, "\x00\x1f") {
			return data.Monomer{}, &screening.FieldError{Field: fmt.Sprintf("tags[%d]", i), Msg: fmt.Sprintf("at most %d characters, no control characters", maxTagLen)}
		}
	}
	return data.Monomer{Name: in.Name, SMILES: in.SMILES, Descriptors: desc, Tags: in.Tags, AllowDuplicate: in.AllowDuplicate}, nil
}

func etag(m data.Monomer) string { return fmt.Sprintf(`"%s-v%d"`, m.ID, m.Version) }

// createMonomer godoc
//
//	@Summary	Store a monomer
//	@Tags		monomers
//	@Accept		json
//	@Produce	json
//	@Param		request	body		MonomerIn	true	"name, SMILES and/or descriptor record, tags"
//	@Success	201		{object}	data.Monomer
//	@Failure	400		{object}	Problem
//	@Failure	409		{object}	Problem
//	@Failure	422		{object}	Problem
//	@Router		/v1/monomers [post]
func (s *Server) createMonomer(c *gin.Context) {
	m, ok := bindMonomer(c)
	if !ok {
		return
	}
	m, err := s.store.CreateMonomer(c.Request.Context(), m)
	if err != nil {
		fail(c, err)
		return
	}
	c.Header("Location", "/v1/monomers/"+m.ID)
	c.Header("ETag", etag(m))
	c.JSON(http.StatusCreated, m)
}

// MonomerList is one page of monomers.
type MonomerList struct {
	Items      []data.Monomer `json:"items"`
	Total      int            `json:"total"`
	Limit      int            `json:"limit"`
	Offset     int            `json:"offset"`
	NextOffset *int           `json:"next_offset"`
}

func intQuery(c *gin.Context, name string, def, lo, hi int) (int, error) {
	v := c.Query(name)
	if v == "" {
		return def, nil
	}
	n, err := strconv.Atoi(v)
	if err != nil || n < lo || n > hi {
		return 0, &screening.FieldError{Field: name, Msg: fmt.Sprintf("must be an integer from %d to %d", lo, hi)}
	}
	return n, nil
}

// onlyQuery refuses query parameters other than the ones named (a misspelled filter must not be
// ignored silently): 400 naming the parameter.
func onlyQuery(c *gin.Context, allowed ...string) error {
	for k := range c.Request.URL.Query() {
		ok := false
		for _, a := range allowed {
			if k == a {
				ok = true
				break
			}
		}
		if !ok {
			return badRequest(errMalformed, k, fmt.Sprintf("unknown query parameter %q (known: %s)", k, strings.Join(allowed, ", ")))
		}
	}
	return nil
}

// pageQuery reads limit (1..max, default def) and offset (≥ 0).
func pageQuery(c *gin.Context, def, max int) (limit, offset int, err error) {
	if limit, err = intQuery(c, "limit", def, 1, max); err != nil {
		return 0, 0, err
	}
	offset, err = intQuery(c, "offset", 0, 0, 1<<30)
	return limit, offset, err
}

// bindMonomer decodes and validates a monomer record; on failure it has answered already.
func bindMonomer(c *gin.Context) (data.Monomer, bool) {
	var in MonomerIn
	if err := decodeJSON(c, &in); err != nil {
		fail(c, err)
		return data.Monomer{}, false
	}
	m, err := in.validate()
	if err != nil {
		fail(c, err)
		return data.Monomer{}, false
	}
	return m, true
}

// listMonomers godoc
//
//	@Summary	List stored monomers
//	@Tags		monomers
//	@Produce	json
//	@Param		tag		query		string	false	"exact tag"
//	@Param		name	query		string	false	"case-insensitive part of the name"
//	@Param		limit	query		int		false	"page size (1-500, default 50)"
//	@Param		offset	query		int		false	"items to skip"
//	@Success	200		{object}	MonomerList
//	@Failure	422		{object}	Problem
//	@Router		/v1/monomers [get]
func (s *Server) listMonomers(c *gin.Context) {
	if err := onlyQuery(c, "tag", "name", "limit", "offset"); err != nil {
		fail(c, err)
		return
	}
	limit, offset, err := pageQuery(c, 50, 500)
	if err != nil {
		fail(c, err)
		return
	}
	items, total, err := s.store.ListMonomers(c.Request.Context(), data.MonomerFilter{Tag: c.Query("tag"), Name: c.Query("name"), Limit: limit, Offset: offset})
	if err != nil {
		fail(c, err)
		return
	}
	resp := MonomerList{Items: items, Total: total, Limit: limit, Offset: offset}
	if offset+len(items) < total {
		n := offset + len(items)
		resp.NextOffset = &n
	}
	c.JSON(http.StatusOK, resp)
}

// getMonomer godoc
//
//	@Summary	Read a stored monomer
//	@Tags		monomers
//	@Produce	json
//	@Param		id				path		string	true	"monomer id"
//	@Param		If-None-Match	header		string	false	"ETag from an earlier read"
//	@Success	200				{object}	data.Monomer
//	@Success	304				"not modified"
//	@Failure	404				{object}	Problem
//	@Router		/v1/monomers/{id} [get]
func (s *Server) getMonomer(c *gin.Context) {
	m, err := s.store.GetMonomer(c.Request.Context(), c.Param("id"))
	if err != nil {
		fail(c, err)
		return
	}
	tag := etag(m)
	c.Header("ETag", tag)
	if inm := c.GetHeader("If-None-Match"); inm != "" && (inm == tag || inm == "*") {
		c.Status(http.StatusNotModified)
		return
	}
	c.JSON(http.StatusOK, m)
}

// replaceMonomer godoc
//
//	@Summary	Replace a stored monomer
//	@Tags		monomers
//	@Accept		json
//	@Produce	json
//	@Param		id			path		string		true	"monomer id"
//	@Param		If-Match	header		string		false	"ETag the replace is conditional on"
//	@Param		request		body		MonomerIn	true	"the new record"
//	@Success	200			{object}	data.Monomer
//	@Failure	404			{object}	Problem
//	@Failure	412			{object}	Problem	"If-Match does not match"
//	@Failure	422			{object}	Problem
//	@Router		/v1/monomers/{id} [put]
func (s *Server) replaceMonomer(c *gin.Context) {
	m, ok := bindMonomer(c)
	if !ok {
		return
	}
	id := c.Param("id")
	ifVersion := 0
	if im := c.GetHeader("If-Match"); im != "" && im != "*" {
		var v int
		prefix := `"` + id + `-v`
		if !strings.HasPrefix(im, prefix) || !strings.HasSuffix(im, `"`) {
			fail(c, badRequest(errPrecondition, "If-Match", "If-Match does not name this monomer's ETag"))
			return
		}
		if _, err := fmt.Sscanf(strings.TrimSuffix(strings.TrimPrefix(im, prefix), `"`), "%d", &v); err != nil || v <= 0 {
			fail(c, badRequest(errPrecondition, "If-Match", "malformed ETag in If-Match"))
			return
		}
		ifVersion = v
	}
	m, err := s.store.ReplaceMonomer(c.Request.Context(), id, m, ifVersion)
	if err != nil {
		fail(c, err)
		return
	}
	c.Header("ETag", etag(m))
	c.JSON(http.StatusOK, m)
}

// deleteMonomer godoc
//
//	@Summary	Delete a stored monomer and its saved results
//	@Tags		monomers
//	@Param		id	path	string	true	"monomer id"
//	@Success	204	"deleted"
//	@Failure	404	{object}	Problem
//	@Router		/v1/monomers/{id} [delete]
func (s *Server) deleteMonomer(c *gin.Context) {
	if err := s.store.DeleteMonomer(c.Request.Context(), c.Param("id")); err != nil {
		fail(c, err)
		return
	}
	c.Status(http.StatusNoContent)
}

// ResultHistory is the saved results of a monomer, newest first.
type ResultHistory struct {
	MonomerID string             `json:"monomer_id"`
	Results   []data.SavedResult `json:"results"`
}

// monomerResults godoc
//
//	@Summary	Screening history of a stored monomer
//	@Tags		monomers
//	@Produce	json
//	@Param		id		path		string	true	"monomer id"
//	@Param		limit	query		int		false	"most results (1-500, default 50)"
//	@Success	200		{object}	ResultHistory
//	@Failure	404		{object}	Problem
//	@Router		/v1/monomers/{id}/results [get]
func (s *Server) monomerResults(c *gin.Context) {
	if err := onlyQuery(c, "limit"); err != nil {
		fail(c, err)
		return
	}
	limit, err := intQuery(c, "limit", 50, 1, 500)
	if err != nil {
		fail(c, err)
		return
	}
	rs, err := s.store.ListResults(c.Request.Context(), c.Param("id"), limit)
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, ResultHistory{MonomerID: c.Param("id"), Results: rs})
}
