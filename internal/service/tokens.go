package service

import (
	"context"
	"crypto/rand"
	"crypto/sha256"
	"encoding/base64"
	"encoding/hex"
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
	if len(name) > 200 {
		return "", domain.Token{}, domain.FieldErr("name", "name is longer than 200 characters")
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
