package batch

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"time"

	"ringsieve/screening"
	"ringsieve/screening/judge"
	"ringsieve/screening/molfile"
	"ringsieve/screening/smiles"
	"ringsieve/screening/units"
)

// Job states.
const (
	JobQueued   = "queued"
	JobRunning  = "running"
	JobDone     = "done"
	JobFailed   = "failed"
	JobCanceled = "canceled"
)

// Item states.
const (
	ItemPending = "pending"
	ItemDone    = "done"
	ItemFailed  = "failed"
)

// Store errors the runner tells apart; the data layer returns errors matching them.
var (
	// ErrNotFound: no such job, chunk, monomer or record.
	ErrNotFound = errors.New("not found")
	// ErrLeaseLost: the chunk's lease expired and another worker may hold it; the outcomes
	// were not stored.
	ErrLeaseLost = errors.New("chunk lease lost")
)

// Job is an asynchronous screening job as stored.
type Job struct {
	ID           string                  `json:"id"`
	Status       string                  `json:"status"`
	Conditions   screening.ConditionsOut `json:"conditions"`
	Total        int                     `json:"total"`
	Done         int                     `json:"done"`
	Failed       int                     `json:"failed"`
	SourceFormat string                  `json:"source_format"`
	ExtraColumns []string                `json:"extra_columns"`
	Error        string                  `json:"error,omitempty"`
	CreatedAt    time.Time               `json:"created_at"`
	StartedAt    *time.Time              `json:"started_at,omitempty"`
	FinishedAt   *time.Time              `json:"finished_at,omitempty"`
}

// ItemSource is the stored form of one job item's monomer: exactly one field is set.
type ItemSource struct {
	SMILES      string                 `json:"smiles,omitempty"`
	Molfile     string                 `json:"molfile,omitempty"`
	Descriptors *screening.Descriptors `json:"descriptors,omitempty"`
	MonomerID   string                 `json:"monomer_id,omitempty"`
}

// Item is one submitted item of a job.
type Item struct {
	Seq    int
	ItemID string
	Line   int
	Source ItemSource
	Extra  []string
}

// ItemError is why an item could not be screened, in domain terms: a code (CodeInvalidSMILES,
// CodeInvalidValue, CodeNotFound, CodeInternal), a message safe to show, and where known the
// field and the SMILES position.
type ItemError struct {
	Code     string `json:"code"`
	Message  string `json:"message"`
	Field    string `json:"field,omitempty"`
	Position *int   `json:"position,omitempty"`
}

// Item error codes.
const (
	CodeInvalidSMILES = "invalid_smiles"
	CodeInvalidValue  = "invalid_value"
	CodeNotFound      = "not_found"
	CodeTooComplex    = "structure_too_complex"
	CodeInternal      = "internal"
)

func (e *ItemError) Error() string { return e.Message }

// Unwrap lets errors.Is match an item error against the sentinel of its code.
func (e *ItemError) Unwrap() error {
	switch e.Code {
	case CodeInvalidSMILES:
		return smiles.ErrSMILES
	case CodeInvalidValue:
		return units.ErrInvalid
	case CodeNotFound:
		return ErrNotFound
	case CodeTooComplex:
		return units.ErrTooComplex
	}
	return nil
}

// NewItemError classifies err (a SMILES error, an invalid value, a missing monomer, or anything
// else, whose text is not shown).
func NewItemError(err error) *ItemError {
	var ie *ItemError
	if errors.As(err, &ie) {
		return ie
	}
	e := &ItemError{Message: err.Error()}
	var se *smiles.Error
	var fe *units.FieldError
	var me *molfile.Error
	switch {
	case errors.As(err, &se):
		e.Code, e.Field = CodeInvalidSMILES, "smiles"
		pos := se.Pos
		e.Position = &pos
	case errors.As(err, &fe):
		e.Code, e.Field = CodeInvalidValue, fe.Field
	case errors.As(err, &me):
		e.Code, e.Field = CodeInvalidValue, "molfile"
	case errors.Is(err, units.ErrTooComplex):
		e.Code, e.Field = CodeTooComplex, "smiles"
	case errors.Is(err, units.ErrInvalid):
		e.Code = CodeInvalidValue
	case errors.Is(err, ErrNotFound):
		e.Code, e.Field = CodeNotFound, "monomer_id"
	default:
		e.Code, e.Message = CodeInternal, "the item could not be screened; the failure has been logged"
	}
	return e
}

// Outcome is what a worker writes back for one item: a result (Result, Key) or an error.
type Outcome struct {
	Seq     int
	Verdict string
	Key     Key
	Result  []byte // screen result in its stored form (EncodeResult), or JSON ItemError when Failed
	Failed  bool
	// Summary is the result's CSV fields (see batch.Summary); empty for a failed item.
	Summary string
}

// Chunk is a run of items of one job, claimed by one worker under a lease.
type Chunk struct {
	JobID      string
	No         int
	FirstSeq   int
	LastSeq    int
	Owner      string
	Conditions screening.ConditionsOut
}

// Store is what the job runner needs from the data layer. Implementations make a claim atomic
// (no two workers hold one chunk), and store a chunk's outcomes and mark it done in one
// transaction only while the worker still holds its lease, so every item is recorded once.
type Store interface {
	// ClaimChunk claims the first unclaimed (or lease-expired) chunk of the oldest runnable job
	// for owner until now+lease; ErrNotFound when there is no work.
	ClaimChunk(ctx context.Context, owner string, lease time.Duration) (Chunk, error)
	// ChunkItems returns the items of a claimed chunk in sequence order.
	ChunkItems(ctx context.Context, c Chunk) ([]Item, error)
	// RenewLease extends the lease of a claimed chunk; ErrLeaseLost when it is no longer held.
	// It returns the job's status.
	RenewLease(ctx context.Context, c Chunk, lease time.Duration) (string, error)
	// CompleteChunk stores the outcomes, marks the chunk done, advances the job's counters and
	// finishes the job when its last chunk is done, in one transaction; ErrLeaseLost when the
	// lease is no longer held (nothing is stored). It returns the job's status after.
	CompleteChunk(ctx context.Context, c Chunk, outs []Outcome) (string, error)
	// ReleaseChunk gives a claimed chunk back unprocessed (shutdown).
	ReleaseChunk(ctx context.Context, c Chunk) error
	// FailJob ends a job with an error message.
	FailJob(ctx context.Context, jobID, msg string) error
	// MonomerSource returns the screening source of a stored monomer (ErrNotFound when none).
	MonomerSource(ctx context.Context, id string) (screening.Source, error)
}

// ConditionsOf returns the validated conditions a job stores (the effective conditions, as
// shown).
func ConditionsOf(c screening.ConditionsOut) (screening.Conditions, error) {
	cond := screening.DefaultConditions()
	t, err := units.NewTempK(c.TemperatureK)
	if err != nil {
		return cond, units.Refield(err, "conditions.temperature_k")
	}
	cond.Temp = t
	cond.Bulk = c.Bulk
	if !c.Bulk {
		v, err := units.NewConcMolL(c.MonomerConcMolL)
		if err != nil {
			return cond, units.Refield(err, "conditions.monomer_conc_mol_l")
		}
		cond.Conc = v
	}
	cat, err := units.ParseCatalystClass(c.Catalyst)
	if err != nil {
		return cond, units.Refield(err, "conditions.catalyst")
	}
	cond.Catalyst = cat
	tm, err := units.ParseThermoMethod(c.ThermoMethod)
	if err != nil {
		return cond, units.Refield(err, "conditions.thermo_method")
	}
	cond.ThermoMethod = tm
	return cond, nil
}

// EffectiveConditions is the stored and shown form of validated conditions.
func EffectiveConditions(c screening.Conditions) screening.ConditionsOut { return judge.OutOf(c) }

// DecodeConditions reads stored job conditions: the effective form (temperature_k set), or the
// form of earlier versions, which kept the request's fields (temperature_c or temperature_k,
// monomer_conc_mol_l, bulk, catalyst; any of them absent means the default; jobs stored before
// thermo_method existed run with auto).
func DecodeConditions(b []byte) (screening.ConditionsOut, error) {
	var raw struct {
		TemperatureC    *float64 `json:"temperature_c"`
		TemperatureK    *float64 `json:"temperature_k"`
		MonomerConcMolL *float64 `json:"monomer_conc_mol_l"`
		Bulk            bool     `json:"bulk"`
		Catalyst        string   `json:"catalyst"`
		ThermoMethod    string   `json:"thermo_method"`
	}
	if err := json.Unmarshal(b, &raw); err != nil {
		return screening.ConditionsOut{}, fmt.Errorf("stored conditions: %w", err)
	}
	c := screening.DefaultConditions()
	switch {
	case raw.TemperatureK != nil:
		c.Temp = units.TempK(*raw.TemperatureK)
	case raw.TemperatureC != nil:
		c.Temp = units.TempK(*raw.TemperatureC + units.ZeroCelsiusK)
	}
	if raw.MonomerConcMolL != nil {
		c.Conc = units.ConcMolL(*raw.MonomerConcMolL)
	}
	c.Bulk = raw.Bulk
	if raw.Catalyst != "" {
		c.Catalyst = units.CatalystClass(raw.Catalyst)
	}
	if raw.ThermoMethod != "" {
		c.ThermoMethod = units.ThermoMethod(raw.ThermoMethod)
	}
	return EffectiveConditions(c), nil
}

// DecodeItemSource reads a stored item source (the JSON of an ItemSource). A source holding
// only a SMILES of printable ASCII — almost every stored item — is read without the JSON
// decoder: as it stands when it has nothing to unescape, with \\ and \" undone when those are
// its only escapes; the result is the same as json.Unmarshal's.
func DecodeItemSource(src string) (ItemSource, error) {
	const head, tail = `{"smiles":"`, `"}`
	if len(src) > len(head)+len(tail) && src[:len(head)] == head && src[len(src)-len(tail):] == tail {
		if smi, ok := plainJSONString(src[len(head) : len(src)-len(tail)]); ok {
			return ItemSource{SMILES: smi}, nil
		}
	}
	var s ItemSource
	err := json.Unmarshal([]byte(src), &s)
	return s, err
}

// plainJSONString reads the inside of a JSON string of printable ASCII whose only escapes are
// \\ and \"; ok is false for anything else (which the JSON decoder then reads or refuses).
func plainJSONString(v string) (string, bool) {
	escapes := 0
	for i := 0; i < len(v); i++ {
		switch c := v[i]; {
		case c < 0x20 || c > 0x7e || c == '"':
			return "", false
		case c == '\\':
			if i+1 == len(v) || (v[i+1] != '\\' && v[i+1] != '"') {
				return "", false
			}
			escapes++
			i++
		}
	}
	if escapes == 0 {
		return v, true
	}
	b := make([]byte, 0, len(v)-escapes)
	for i := 0; i < len(v); i++ {
		if v[i] == '\\' {
			i++
		}
		b = append(b, v[i])
	}
	return string(b), true
}
