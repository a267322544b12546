package api

import (
	"net/http"

	"github.com/gin-gonic/gin"

	"ringsieve/screening"
	"ringsieve/screening/plan"
)

// PlanTarget is the target chain length: exactly one of dp or mn_g_mol.
type PlanTarget struct {
	DP     float64 `json:"dp,omitempty" example:"200"`
	MnGmol float64 `json:"mn_g_mol,omitempty"`
}

// PlanRequest is the body of POST /v1/plan.
type PlanRequest struct {
	MonomerSource
	Conditions *ConditionsIn `json:"conditions,omitempty"`
	Target     *PlanTarget   `json:"target"`
	// MonomerMassG is the monomer charged per batch (default 1 g).
	MonomerMassG float64 `json:"monomer_mass_g,omitempty" example:"5"`
	// MonomerMolarMassGmol is needed for descriptor records (structures give it).
	MonomerMolarMassGmol float64 `json:"monomer_molar_mass_g_mol,omitempty"`
	// EndGroupMassGmol: initiator and quench end groups (default 104.152: benzylidene start, vinyl-ether quench).
	EndGroupMassGmol *float64 `json:"end_group_mass_g_mol,omitempty"`
	// CatalystMolarMassGmol overrides the class's representative initiator.
	CatalystMolarMassGmol *float64 `json:"catalyst_molar_mass_g_mol,omitempty"`
	// KiOverKp is k_i/k_p for the slow-initiation dispersity (class default when absent).
	KiOverKp *float64 `json:"ki_over_kp,omitempty"`
	// KpLmolS is the propagation rate constant, L/(mol s), for the conversion–time curve.
	KpLmolS *float64 `json:"kp_l_mol_s,omitempty"`
	// TargetConversion for the time estimate (default 0.95).
	TargetConversion float64 `json:"target_conversion,omitempty"`
	// Solvent for the adiabatic rise: toluene (default), dichloromethane, tetrahydrofuran, cyclohexane, benzene, chloroform.
	Solvent string `json:"solvent,omitempty"`
}

// plan godoc
//
//	@Summary		Polymerization plan for one monomer
//	@Description	Ranks catalyst classes against the monomer's functional groups, computes [M]0/[I]0, catalyst amount, M_n and dispersity (Poisson and slow initiation), the conversion–time curve when k_p is given, Jacobson–Stockmayer cyclics and critical concentration for low-strain monomers, and the adiabatic temperature rise with graded cautions.
//	@Tags			planning
//	@Accept			json
//	@Produce		json
//	@Param			request	body		PlanRequest	true	"monomer, conditions and target"
//	@Success		200		{object}	plan.Plan
//	@Failure		400		{object}	Problem
//	@Failure		404		{object}	Problem
//	@Failure		422		{object}	Problem
//	@Router			/v1/plan [post]
func (s *Server) plan(c *gin.Context) {
	var req PlanRequest
	cond, ok := bind(c, &req, func(r *PlanRequest) *ConditionsIn { return r.Conditions })
	if !ok {
		return
	}
	if req.Target == nil {
		fail(c, &screening.FieldError{Field: "target", Msg: `give the target chain length: {"dp": 200} or {"mn_g_mol": 25000}`})
		return
	}
	r, err := s.screenSource(c.Request.Context(), req.MonomerSource, cond)
	if err != nil {
		fail(c, err)
		return
	}
	if cond.Bulk && r.Thermo != nil {
		cond.Conc = screening.ConcMolL(r.Thermo.MonomerConcMolL)
	}
	p, err := plan.Make(r, plan.Input{
		TargetDP: req.Target.DP, TargetMn: req.Target.MnGmol, MonomerMassG: req.MonomerMassG, MonomerMolarMass: req.MonomerMolarMassGmol,
		EndGroupMass: req.EndGroupMassGmol, CatalystMolarMass: req.CatalystMolarMassGmol, KiOverKp: req.KiOverKp, KpLmolS: req.KpLmolS,
		TargetConversion: req.TargetConversion, Solvent: req.Solvent,
	}, cond)
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, p)
}
