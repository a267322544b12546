package api

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"net/http"
	"strconv"

	"github.com/gin-gonic/gin"

	"ringsieve/screening"
	"ringsieve/screening/depict"
)

// depictImage godoc
//
//	@Summary		A 2-D drawing of a structure
//	@Description	SVG (image/svg+xml) or the 2-D coordinates as a V2000 molfile with wedge and hash bonds (chemical/x-mdl-molfile). The ring olefin that would open is highlighted unless highlight=false. Responses are cacheable: ETag keyed by the request and the engine version, Cache-Control max-age one day.
//	@Tags			screening
//	@Produce		image/svg+xml
//	@Produce		chemical/x-mdl-molfile
//	@Param			smiles		query		string	true	"the structure"
//	@Param			format		query		string	false	"svg (default) or molfile"	Enums(svg, molfile)
//	@Param			width		query		int		false	"SVG width in pixels (40–2000, default 300)"
//	@Param			height		query		int		false	"SVG height in pixels (40–2000, default 200)"
//	@Param			highlight	query		bool	false	"mark the ring olefin that opens (default true)"
//	@Success		200			{string}	string	"the drawing"
//	@Success		304			{string}	string	"not modified"
//	@Failure		400			{object}	Problem
//	@Failure		422			{object}	Problem	"invalid SMILES, with its position"
//	@Router			/v1/depict [get]
func (s *Server) depictImage(c *gin.Context) {
	if err := onlyQuery(c, "smiles", "format", "width", "height", "highlight"); err != nil {
		fail(c, err)
		return
	}
	smi := c.Query("smiles")
	if smi == "" {
		fail(c, &screening.FieldError{Field: "smiles", Msg: "give the structure as ?smiles=…"})
		return
	}
	format := c.DefaultQuery("format", "svg")
	if format != "svg" && format != "molfile" {
		fail(c, &screening.FieldError{Field: "format", Msg: "format is svg or molfile"})
		return
	}
	size := func(name string, def int) (int, error) {
		v := c.Query(name)
		if v == "" {
			return def, nil
		}
		n, err := strconv.Atoi(v)
		if err != nil || n < 40 || n > 2000 {
			return 0, &screening.FieldError{Field: name, Msg: name + " is a whole number of pixels from 40 to 2000"}
		}
		return n, nil
	}
	w, err := size("width", 300)
	if err != nil {
		fail(c, err)
		return
	}
	h, err := size("height", 200)
	if err != nil {
		fail(c, err)
		return
	}
	highlight := c.DefaultQuery("highlight", "true")
	if highlight != "true" && highlight != "false" {
		fail(c, &screening.FieldError{Field: "highlight", Msg: "highlight is true or false"})
		return
	}
	sum := sha256.Sum256([]byte(fmt.Sprintf("%s\x00%s\x00%d\x00%d\x00%s\x00%s", smi, format, w, h, highlight, screening.EngineVersion)))
	tag := `"` + hex.EncodeToString(sum[:12]) + `"`
	c.Header("ETag", tag)
	c.Header("Cache-Control", "public, max-age=86400")
	if c.GetHeader("If-None-Match") == tag {
		c.Status(http.StatusNotModified)
		return
	}
	d, err := screening.Depict(smi)
	if err != nil {
		c.Header("Cache-Control", "no-store")
		fail(c, err)
		return
	}
	if format == "molfile" {
		var b bytes.Buffer
		if err := d.WriteMolfile(&b, smi); err != nil {
			fail(c, &screening.FieldError{Field: "smiles", Msg: err.Error()})
			return
		}
		c.Data(http.StatusOK, "chemical/x-mdl-molfile", b.Bytes())
		return
	}
	o := depict.SVGOptions{Width: w, Height: h, Title: smi}
	if highlight == "true" && d.OpeningBond >= 0 {
		bd := d.Mol.Bonds[d.OpeningBond]
		o.HighlightBonds, o.HighlightAtoms = []int{d.OpeningBond}, []int{bd.A, bd.B}
	}
	c.Data(http.StatusOK, "image/svg+xml", d.SVG(o))
}
