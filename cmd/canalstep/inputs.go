package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"sort"
	"strings"

	"github.com/BurntSushi/toml"
	flag "github.com/spf13/pflag"

	"canalstep/report/textsafe"
)

// Input size limits: far above any real file, low enough that a wrong path
// (a disk image, /dev/zero) fails fast instead of exhausting memory.
const (
	maxAlignmentBytes = 512 << 20 // GeoJSON
	maxDesignBytes    = 1 << 20   // TOML design and job files
)

// readInput reads a regular file of at most limit bytes; what names it in
// errors ("alignment file").
func readInput(path, what string, limit int64) ([]byte, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, inputf("cannot read the %s: %v", what, err)
	}
	if !st.Mode().IsRegular() {
		return nil, inputf("the %s %s is not a regular file; give a file", what, textsafe.Terminal(path))
	}
	if st.Size() > limit {
		return nil, inputf("the %s %s is %d bytes, more than the %d allowed", what, textsafe.Terminal(path), st.Size(), limit)
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, inputf("cannot read the %s: %v", what, err)
	}
	defer f.Close()
	b, err := io.ReadAll(io.LimitReader(f, limit+1))
	if err != nil {
		return nil, inputf("cannot read the %s: %v", what, err)
	}
	if int64(len(b)) > limit {
		return nil, inputf("the %s %s grew past %d bytes while being read", what, textsafe.Terminal(path), limit)
	}
	return b, nil
}

// designFile is a --design TOML file: keys are flag names with _ for -;
// [alignment."NAME"] tables hold any design key for one alignment.
type designFile struct {
	path   string
	root   map[string]any
	tables map[string]map[string]any
}

func readDesignFile(path string) (*designFile, error) {
	b, err := readInput(path, "design file", maxDesignBytes)
	if err != nil {
		return nil, err
	}
	var values map[string]any
	if _, err := toml.Decode(string(b), &values); err != nil {
		return nil, inputf("design file %s: %v", textsafe.Terminal(path), oneLineError(err))
	}
	df := &designFile{path: path, root: values, tables: map[string]map[string]any{}}
	if raw, ok := values["alignment"]; ok {
		delete(values, "alignment")
		tbl, ok := raw.(map[string]any)
		if !ok {
			return nil, inputf("design file %s: alignment must be a table of [alignment.\"NAME\"] tables", textsafe.Terminal(path))
		}
		for name, v := range tbl {
			t, ok := v.(map[string]any)
			if !ok {
				return nil, inputf("design file %s: alignment.%s must be a table of design keys", textsafe.Terminal(path), textsafe.Terminal(name))
			}
			df.tables[name] = t
		}
	}
	return df, nil
}

// oneLineError folds a multi-line error message.
func oneLineError(err error) string { return strings.Join(strings.Fields(err.Error()), " ") }

// apply sets the flags of fs from the keys of values (where says which
// table, for messages); with override false, flags set on the command line
// keep their values. skip names keys handled elsewhere.
func (d *designFile) apply(fs *flag.FlagSet, values map[string]any, where string, override bool, skip ...string) error {
	keys := make([]string, 0, len(values))
	for k := range values {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		if contains(skip, k) {
			continue
		}
		name := strings.ReplaceAll(k, "_", "-")
		fl := fs.Lookup(name)
		if fl == nil || name == "design" || name == "out" {
			return inputf("design file %s%s: unknown key %q (keys are the design flags of 'canalstep %s --help' with _ for -)",
				textsafe.Terminal(d.path), where, textsafe.Clip(k, 80), fs.Name())
		}
		if fl.Changed && !override {
			continue // the command line wins over the file's root
		}
		var items []string
		switch v := values[k].(type) {
		case []any:
			for _, e := range v {
				items = append(items, fmt.Sprint(e))
			}
		case map[string]any:
			return inputf("design file %s%s: %s must be a value, not a table", textsafe.Terminal(d.path), where, k)
		default:
			items = []string{fmt.Sprint(v)}
		}
		if fl.Value.Type() == "stringArray" {
			for _, it := range items {
				if err := fs.Set(name, it); err != nil {
					return inputf("design file %s%s: %s: %v", textsafe.Terminal(d.path), where, k, err)
				}
			}
			continue
		}
		if err := fs.Set(name, strings.Join(items, ",")); err != nil {
			return inputf("design file %s%s: %s = %s: %v", textsafe.Terminal(d.path), where, k, textsafe.Clip(fmt.Sprint(values[k]), 80), err)
		}
	}
	return nil
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// inputError marks bad input (a file, a value): exit status 2, like a
// usage error.
func inputf(format string, a ...any) error { return usageError{fmt.Errorf(format, a...)} }

// asInput marks err as bad input when it is not already classified.
func asInput(err error) error {
	var u usageError
	if err == nil || errors.As(err, &u) {
		return err
	}
	return usageError{err}
}
