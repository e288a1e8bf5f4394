package storekit

import (
	"errors"
	"fmt"
	"io/fs"
	"os"

	"github.com/golang-migrate/migrate/v4"
	"github.com/golang-migrate/migrate/v4/source/iofs"
)

// Schema moves one database's schema. Open returns a migrator (the caller
// closes it); FS and Dir hold the migration files this binary carries.
//
// Every step checks before it touches anything: a dirty schema, a schema
// newer than this binary knows, or more steps than there are to take is an
// error that names the versions and what to do, and leaves the database as
// it was.
type Schema struct {
	Open func() (*migrate.Migrate, error)
	FS   fs.FS
	Dir  string
}

// Known returns the versions of the migrations this binary carries, in order.
func (s Schema) Known() ([]uint, error) {
	src, err := iofs.New(s.FS, s.Dir)
	if err != nil {
		return nil, err
	}
	defer src.Close()
	v, err := src.First()
	if err != nil {
		return nil, err
	}
	out := []uint{v}
	for {
		v, err = src.Next(v)
		if errors.Is(err, os.ErrNotExist) || errors.Is(err, fs.ErrNotExist) {
			return out, nil
		}
		if err != nil {
			return nil, err
		}
		out = append(out, v)
	}
}

// NewerSchemaError is the error of a binary started on a schema newer than
// the migrations it carries.
type NewerSchemaError struct {
	Have, Latest uint
}

func (e *NewerSchemaError) Error() string {
	return fmt.Sprintf("the database schema is at version %d but this corvane knows versions up to %d only: "+
		"run a corvane that carries migration %d, or use that newer corvane's `migrate down` to bring the schema "+
		"back to version %d first", e.Have, e.Latest, e.Have, e.Latest)
}

// DirtyError is the error of a schema a failed migration left half way.
type DirtyError struct{ Version uint }

func (e *DirtyError) Error() string {
	return fmt.Sprintf("the database schema is dirty at version %d: a migration failed half way. Repair the "+
		"schema by hand (see the migration files for version %d), then mark the version that matches it with "+
		"`corvane migrate force VERSION`", e.Version, e.Version)
}

// state reads the version and checks it against the known migrations. It
// returns the index in known of the applied version (-1 for none).
func (s Schema) state() (known []uint, at int, version uint, err error) {
	known, err = s.Known()
	if err != nil {
		return nil, 0, 0, err
	}
	version, dirty, err := s.Version()
	if err != nil {
		return nil, 0, 0, err
	}
	if dirty {
		return nil, 0, version, &DirtyError{Version: version}
	}
	at = -1
	if version == 0 {
		return known, at, 0, nil
	}
	for i, k := range known {
		if k == version {
			return known, i, version, nil
		}
	}
	if latest := known[len(known)-1]; version > latest {
		return nil, 0, version, &NewerSchemaError{Have: version, Latest: latest}
	}
	return nil, 0, version, fmt.Errorf("the database schema is at version %d, which this corvane does not carry (it has %v)", version, known)
}

// Up applies every pending migration. A dirty flag read before the
// migrator holds the database's lock may be another replica's migration in
// progress (replicas starting together): Up then leaves the check to the
// migrator, which waits for the lock and checks again before it touches
// anything.
func (s Schema) Up() error {
	var dirty *DirtyError
	if _, _, _, err := s.state(); err != nil && !errors.As(err, &dirty) {
		return err
	}
	err := s.run(func(m *migrate.Migrate) error { return m.Up() })
	var md migrate.ErrDirty
	if errors.As(err, &md) {
		return &DirtyError{Version: uint(md.Version)}
	}
	return err
}

// Steps applies n up migrations (n > 0) or rolls n back (n < 0), refusing
// before it touches anything when fewer than |n| can be taken.
func (s Schema) Steps(n int) error {
	known, at, version, err := s.state()
	if err != nil {
		return err
	}
	applied, pending := at+1, len(known)-(at+1)
	switch {
	case n < 0 && -n > applied:
		return fmt.Errorf("cannot roll back %d migrations: only %d applied (schema version %d); nothing was changed", -n, applied, version)
	case n > 0 && n > pending:
		return fmt.Errorf("cannot apply %d migrations: only %d pending (schema version %d, latest %d); nothing was changed", n, pending, version, known[len(known)-1])
	case n == 0:
		return nil
	}
	return s.run(func(m *migrate.Migrate) error { return m.Steps(n) })
}

// DownAll rolls back every migration.
func (s Schema) DownAll() error {
	if _, _, _, err := s.state(); err != nil {
		return err
	}
	return s.run(func(m *migrate.Migrate) error { return m.Down() })
}

// Force marks the schema as being at version v (0: no migration applied)
// and clean, without running any migration: the way out of a dirty schema
// once it has been repaired by hand. v must be a version this binary carries.
func (s Schema) Force(v uint) error {
	known, err := s.Known()
	if err != nil {
		return err
	}
	ok := v == 0
	for _, k := range known {
		ok = ok || k == v
	}
	if !ok {
		return fmt.Errorf("version %d is not one of this corvane's migrations (0 for none, or one of %v)", v, known)
	}
	return s.run(func(m *migrate.Migrate) error {
		if v == 0 {
			return m.Force(-1) // golang-migrate: -1 is "no version"
		}
		return m.Force(int(v))
	})
}

// Version reports the schema version and whether a failed migration left it
// dirty; 0 when no migration has run.
func (s Schema) Version() (version uint, dirty bool, err error) {
	m, err := s.Open()
	if err != nil {
		return 0, false, err
	}
	defer m.Close()
	v, d, err := m.Version()
	if errors.Is(err, migrate.ErrNilVersion) {
		return 0, false, nil
	}
	return v, d, err
}

func (s Schema) run(fn func(m *migrate.Migrate) error) error {
	m, err := s.Open()
	if err != nil {
		return err
	}
	defer m.Close()
	if err := fn(m); err != nil && !errors.Is(err, migrate.ErrNoChange) {
		return err
	}
	return nil
}
