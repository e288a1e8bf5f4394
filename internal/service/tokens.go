package service

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"encoding/base64"
	"encoding/hex"
	"strconv"
	"strings"

	"corvane/internal/domain"
)

// tokenPrefix marks corvane secrets so they are easy to spot in logs and
// secret scanners.
const tokenPrefix = "cvt_"

// HashToken returns the hex SHA-256 of a token secret. The secrets are 32
// random bytes (256 bits), far beyond guessing, so a fast unsalted hash is
// the right choice: a slow password hash would add latency to every request
// and no protection.
func HashToken(secret string) string {
	sum := sha256.Sum256([]byte(secret))
	return hex.EncodeToString(sum[:])
}

// CreateToken makes a new API token for projectID (domain.AllProjects for a
// site token) with the given role, and returns its secret (shown once; only
// its hash is stored). Project tokens need the project's admin; site tokens
// need a site admin.
func (s *Service) CreateToken(ctx context.Context, projectID int64, role domain.Role, name string) (string, domain.Token, error) {
	a, err := allow(ctx, projectID, domain.RoleAdmin)
	if err != nil {
		return "", domain.Token{}, err
	}
	if role.Rank() == 0 {
		return "", domain.Token{}, domain.FieldErr("role", "role must be read, log or admin, got %q", role)
	}
	name = strings.TrimSpace(name)
	if name == "" {
		name = string(role) + " token"
	}
	if err := domain.CheckText("name", name, domain.MaxNameLen, false); err != nil {
		return "", domain.Token{}, err
	}
	var raw [32]byte
	if _, err := rand.Read(raw[:]); err != nil {
		return "", domain.Token{}, domain.Errorf(domain.Internal, "making a token: %w", err)
	}
	secret := tokenPrefix + base64.RawURLEncoding.EncodeToString(raw[:])
	t := domain.Token{ProjectID: projectID, Name: name, Role: role, Hash: HashToken(secret)}
	err = s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		if projectID != domain.AllProjects {
			if _, err := st.GetProject(ctx, projectID); err != nil {
				return err
			}
		}
		if err := st.CreateToken(ctx, &t); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, "token", t.ID, domain.ActionCreate, nil, t)
	})
	if err != nil {
		return "", domain.Token{}, err
	}
	return secret, t, nil
}

// Authenticate returns the actor of a bearer token secret; Unauthorized when
// the secret is unknown.
func (s *Service) Authenticate(ctx context.Context, secret string) (Actor, error) {
	if secret == "" {
		return Actor{}, domain.Errorf(domain.Unauthorized, "a bearer token is required")
	}
	t, err := s.store.TokenByHash(ctx, HashToken(secret))
	if domain.IsKind(err, domain.NotFound) {
		return Actor{}, domain.Errorf(domain.Unauthorized, "unknown or revoked token")
	}
	if err != nil {
		return Actor{}, err
	}
	return Actor{TokenID: t.ID, Name: t.Name, ProjectID: t.ProjectID, Role: t.Role}, nil
}

// ListTokens lists a project's tokens without their secrets (admin).
func (s *Service) ListTokens(ctx context.Context, projectID int64) ([]domain.Token, error) {
	if _, err := allow(ctx, projectID, domain.RoleAdmin); err != nil {
		return nil, err
	}
	return s.store.ListTokens(ctx, projectID)
}

// GetToken returns a token of the project (admin), without its secret; a
// token of another project is reported as not found. projectID
// domain.AllProjects names the site tokens.
func (s *Service) GetToken(ctx context.Context, projectID, tokenID int64) (domain.Token, error) {
	if _, err := allow(ctx, projectID, domain.RoleAdmin); err != nil {
		return domain.Token{}, err
	}
	return tokenOf(ctx, s.store, projectID, tokenID)
}

func tokenOf(ctx context.Context, st domain.Store, projectID, tokenID int64) (domain.Token, error) {
	t, err := st.GetToken(ctx, tokenID)
	if err == nil && t.ProjectID != projectID {
		err = domain.Errorf(domain.NotFound, "token %d not found in %s", tokenID, scopeName(projectID))
	}
	return t, err
}

func scopeName(projectID int64) string {
	if projectID == domain.AllProjects {
		return "the site tokens"
	}
	return "project " + strconv.FormatInt(projectID, 10)
}

// RevokeToken deletes a token of the project (admin), so its secret is
// refused from then on; NotFound when the project has no token with that id.
// projectID domain.AllProjects names the site tokens (site admin).
func (s *Service) RevokeToken(ctx context.Context, projectID, tokenID int64) (domain.Token, error) {
	var t domain.Token
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		a, err := allow(ctx, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		if t, err = tokenOf(ctx, st, projectID, tokenID); err != nil {
			return err
		}
		if err := st.DeleteToken(ctx, tokenID); err != nil {
			return err
		}
		return audit(ctx, st, a, projectID, "token", tokenID, domain.ActionDelete, t, nil)
	})
	return t, err
}

// RevokeTokensNamed deletes every token of the project with exactly the
// given name (admin) in one transaction and returns them; NotFound when there
// is none.
func (s *Service) RevokeTokensNamed(ctx context.Context, projectID int64, name string) ([]domain.Token, error) {
	var gone []domain.Token
	err := s.store.InTx(ctx, func(ctx context.Context, st domain.Store) error {
		gone = nil
		a, err := allow(ctx, projectID, domain.RoleAdmin)
		if err != nil {
			return err
		}
		ts, err := st.ListTokens(ctx, projectID)
		if err != nil {
			return err
		}
		for _, t := range ts {
			if t.Name != name {
				continue
			}
			if err := st.DeleteToken(ctx, t.ID); err != nil {
				return err
			}
			if err := audit(ctx, st, a, projectID, "token", t.ID, domain.ActionDelete, t, nil); err != nil {
				return err
			}
			gone = append(gone, t)
		}
		if len(gone) == 0 {
			return domain.Errorf(domain.NotFound, "no token named %q in %s", name, scopeName(projectID))
		}
		return nil
	})
	return gone, err
}

// Unconfigured reports whether the store holds no project and no site token:
// a fresh database, where the first step is a site admin token made on the
// command line.
func (s *Service) Unconfigured(ctx context.Context) (bool, error) {
	ps, err := s.store.ListProjects(ctx, domain.Page{Limit: 1})
	if err != nil || len(ps) > 0 {
		return false, err
	}
	ts, err := s.store.ListTokens(ctx, domain.AllProjects)
	return err == nil && len(ts) == 0, err
}
