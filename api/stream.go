package api

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"

	"ringsieve/screening"
)

// decodeBatch reads a BatchRequest body ({"items":[…],"conditions":{…}}, keys in any order) as
// a stream: each item is decoded on its own and handed to each, so memory does not grow with
// the item count, and the count is checked while reading — item limit+1 stops the read with a
// 422 naming the limit (tooMany gives its text). Unknown fields anywhere are refused, as
// decodeJSON does. It returns the conditions (nil when absent) and the number of items.
func decodeBatch(body []byte, limit int, tooMany func(limit int) string, each func(i int, it BatchItem) error) (*ConditionsIn, int, error) {
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.DisallowUnknownFields()
	malformed := func(field string, err error) error {
		if field == "" {
			field = jsonErrField(err)
		}
		return badRequest(errMalformed, field, jsonErrMessage(err))
	}
	tok, err := dec.Token()
	if err != nil {
		return nil, 0, malformed("", err)
	}
	if d, ok := tok.(json.Delim); !ok || d != '{' {
		return nil, 0, badRequest(errMalformed, "", fmt.Sprintf("expected a JSON object at byte 0 (got %v)", tok))
	}
	var cond *ConditionsIn
	n, seenItems, seenCond := 0, false, false
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return nil, 0, malformed("", err)
		}
		key, _ := tok.(string)
		switch key {
		case "items":
			if seenItems {
				return nil, 0, badRequest(errMalformed, "items", "items given twice")
			}
			seenItems = true
			tok, err := dec.Token()
			if err != nil {
				return nil, 0, malformed("items", err)
			}
			if tok == nil {
				continue // "items": null reads as no items
			}
			if d, ok := tok.(json.Delim); !ok || d != '[' {
				return nil, 0, badRequest(errMalformed, "items", fmt.Sprintf("items: expected an array at byte %d", dec.InputOffset()))
			}
			for dec.More() {
				if n >= limit {
					return nil, 0, &screening.FieldError{Field: "items", Msg: tooMany(limit)}
				}
				var it BatchItem
				if err := dec.Decode(&it); err != nil {
					f := fmt.Sprintf("items[%d]", n)
					if sub := jsonErrField(err); sub != "" {
						f += "." + sub
					}
					return nil, 0, malformed(f, err)
				}
				if err := each(n, it); err != nil {
					return nil, 0, err
				}
				n++
			}
			if _, err := dec.Token(); err != nil { // ']'
				return nil, 0, malformed("items", err)
			}
		case "conditions":
			if seenCond {
				return nil, 0, badRequest(errMalformed, "conditions", "conditions given twice")
			}
			seenCond = true
			if err := dec.Decode(&cond); err != nil {
				f := "conditions"
				if sub := jsonErrField(err); sub != "" {
					f += "." + sub
				}
				return nil, 0, malformed(f, err)
			}
		default:
			return nil, 0, badRequest(errMalformed, key, fmt.Sprintf("unknown field %q", key))
		}
	}
	if _, err := dec.Token(); err != nil { // '}'
		return nil, 0, malformed("", err)
	}
	var extra json.RawMessage
	if err := dec.Decode(&extra); !errors.Is(err, io.EOF) {
		return nil, 0, badRequest(errMalformed, "", "trailing data after the JSON object")
	}
	return cond, n, nil
}
