package api

import (
	"context"
	"net/http"

	"github.com/gin-gonic/gin"

	"ringsieve/screening"
)

// ConformersRequest is the body of POST /v1/conformers: a SMILES (stereo from its marks) or a
// V2000 molfile (stereo from its 3-D coordinates).
type ConformersRequest struct {
	SMILES  string `json:"smiles,omitempty" example:"C1=CC2CCC1C2"`
	Molfile string `json:"molfile,omitempty"`
	// Max is how many of the lowest conformers to return (default 5, at most 100).
	Max int `json:"max,omitempty" example:"5"`
	// Variant is mmff94 (default) or mmff94s.
	Variant string `json:"variant,omitempty" example:"mmff94"`
	// Seed repeats a search exactly (default 1).
	Seed *uint64 `json:"seed,omitempty"`
}

// ConformersResponse lists the lowest conformers, lowest energy first.
type ConformersResponse struct {
	SMILES     string                   `json:"smiles,omitempty"`
	Variant    string                   `json:"variant"`
	Conformers []screening.ConformerOut `json:"conformers"`
	// DistinctMinima counts the distinct minima the search found.
	DistinctMinima int     `json:"distinct_minima"`
	MinEnergy      float64 `json:"min_energy_kcal_mol"`
	Minimizations  int     `json:"minimizations"`
	// Converged is false when the search stopped at its budget rather than because the lowest
	// minimum kept recurring.
	Converged bool `json:"converged"`
}

// conformers godoc
//
//	@Summary		Lowest-energy 3-D conformers (MMFF94)
//	@Description	Embeds the structure in 3-D honouring its stereo (tetrahedral centres, cis/trans olefins), searches its conformers with MMFF94 or MMFF94s, and returns the lowest as V2000 molfiles with explicit hydrogens. Work is bounded per molecule (atoms, minimizations); past the bound the answer is a 422 problem.
//	@Tags			force field
//	@Accept			json
//	@Produce		json
//	@Param			request	body		ConformersRequest	true	"structure and options"
//	@Success		200		{object}	ConformersResponse
//	@Failure		400		{object}	Problem
//	@Failure		422		{object}	Problem
//	@Failure		503		{object}	Problem
//	@Router			/v1/conformers [post]
func (s *Server) conformers(c *gin.Context) {
	var req ConformersRequest
	if err := decodeJSON(c, &req); err != nil {
		fail(c, err)
		return
	}
	if req.SMILES == "" && req.Molfile == "" {
		fail(c, &screening.FieldError{Field: "smiles", Msg: "give a SMILES or a molfile"})
		return
	}
	if req.Max == 0 {
		req.Max = 5
	}
	v, err := screening.ParseVariant(req.Variant)
	if err != nil {
		fail(c, err)
		return
	}
	seed := uint64(1)
	if req.Seed != nil {
		seed = *req.Seed
	}
	ctx, cancel := context.WithTimeout(c.Request.Context(), s.cfg.ComputeTimeout)
	defer cancel()
	if err := s.compute.acquire(ctx); err != nil {
		fail(c, errBusy)
		return
	}
	defer s.compute.release()
	set, err := screening.Conformers(ctx, screening.ConformerRequest{SMILES: req.SMILES, Molfile: req.Molfile, Max: req.Max, Variant: v, Seed: seed})
	if err != nil {
		if ctx.Err() != nil {
			err = errComputeTimeout
		}
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, ConformersResponse{SMILES: set.SMILES, Variant: set.Variant, Conformers: set.Conformers,
		DistinctMinima: set.Distinct, MinEnergy: set.MinEnergy, Minimizations: set.Minimizations, Converged: set.Converged})
}

// computeSlots bounds the force-field computations running at once (one per core by default):
// a conformer search keeps a core busy for up to seconds.
type computeSlots chan struct{}

func (s computeSlots) acquire(ctx context.Context) error {
	select {
	case s <- struct{}{}:
		return nil
	case <-ctx.Done():
		return ctx.Err()
	}
}

func (s computeSlots) release() { <-s }
