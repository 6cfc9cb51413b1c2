package runner

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"reflect"
	"strconv"
)

// Numbers that do not exist (NaN, +Inf, -Inf) are never written as numbers
// and never make an encoding fail: MarshalStable writes them as null. It
// first encodes as is; only when the encoder refuses a value does it
// replace every non-finite float in the value by a sentinel (restoring
// them afterwards, since the value is shared with the report), encode
// again and turn the sentinel into null.

// sentinel is a float no result holds (a subnormal with a fixed pattern).
var (
	sentinel     = math.Float64frombits(0x000d0a7e5eed1e55)
	sentinelJSON = []byte(strconv.FormatFloat(sentinel, 'e', -1, 64))
)

func marshalFinite(v any, encode func(any) ([]byte, error)) ([]byte, error) {
	b, err := encode(v)
	var ue *json.UnsupportedValueError
	if err == nil || !errors.As(err, &ue) {
		return b, err
	}
	rv := reflect.ValueOf(v)
	cp := reflect.New(rv.Type()).Elem()
	cp.Set(rv)
	var undo []func()
	scrub(cp, &undo)
	defer func() {
		for i := len(undo) - 1; i >= 0; i-- {
			undo[i]()
		}
	}()
	b, err = encode(cp.Interface())
	if err != nil {
		return nil, err
	}
	return bytes.ReplaceAll(b, sentinelJSON, []byte("null")), nil
}

// scrub replaces non-finite floats reachable from the addressable value v
// by the sentinel, recording how to undo each change.
func scrub(v reflect.Value, undo *[]func()) {
	switch v.Kind() {
	case reflect.Float32, reflect.Float64:
		if f := v.Float(); (math.IsNaN(f) || math.IsInf(f, 0)) && v.CanSet() {
			v.SetFloat(sentinel)
			*undo = append(*undo, func() { v.SetFloat(f) })
		}
	case reflect.Pointer, reflect.Interface:
		if v.IsNil() {
			return
		}
		e := v.Elem()
		if v.Kind() == reflect.Interface {
			// An interface's value is not addressable: work on a copy.
			cp := reflect.New(e.Type()).Elem()
			cp.Set(e)
			n := len(*undo)
			scrub(cp, undo)
			if len(*undo) > n && v.CanSet() {
				orig := e
				v.Set(cp)
				*undo = append(*undo, func() { v.Set(orig) })
			}
			return
		}
		scrub(e, undo)
	case reflect.Struct:
		for i := 0; i < v.NumField(); i++ {
			if v.Type().Field(i).IsExported() || v.Type().Field(i).Anonymous {
				scrub(v.Field(i), undo)
			}
		}
	case reflect.Slice, reflect.Array:
		for i := 0; i < v.Len(); i++ {
			scrub(v.Index(i), undo)
		}
	case reflect.Map:
		iter := v.MapRange()
		for iter.Next() {
			k, e := iter.Key(), iter.Value()
			cp := reflect.New(e.Type()).Elem()
			cp.Set(e)
			n := len(*undo)
			scrub(cp, undo)
			if len(*undo) > n {
				orig := e
				v.SetMapIndex(k, cp)
				*undo = append(*undo, func() { v.SetMapIndex(k, orig) })
			}
		}
	}
}
