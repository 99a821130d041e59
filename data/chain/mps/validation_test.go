//go:build validation

package mps

import "testing"

// TestIsingOpenChainFreeFermions128 is the 128-site case of
// TestIsingOpenChainFreeFermions (Pfeuty, Ann. Phys. 57, 79 (1970)): energy
// to 1e-8 relative, every ⟨X_i⟩ and ⟨Z_iZ_{i+1}⟩ to 1e-6.
func TestIsingOpenChainFreeFermions128(t *testing.T) { checkFreeFermion(t, 128) }
