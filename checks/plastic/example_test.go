package plastic_test

import (
	"context"
	"fmt"

	"matgate/checks/plastic"
)

// A demo material (invented values, SI units): one Armstrong-Frederick term
// and Voce hardening, pulled to 2 % strain in uniaxial stress. Checked by
// hand against the closed form: alpha = (C/gamma)(1 - exp(-gamma eps_p)) =
// 1.327e8, R = Q (1 - exp(-b eps_p)) = 4.96e6, sigma = sigmaY + alpha + R.
func Example() {
	m, err := plastic.NewMaterial(200e9, 0.3, 250e6,
		[]plastic.Term{{C: 40e9, Gamma: 300}}, plastic.Isotropic{Kind: plastic.IsoVoce, Q: 30e6, B: 10})
	if err != nil {
		fmt.Println(err)
		return
	}
	var s plastic.State1D
	res, err := m.Run1D(context.Background(), &s, &plastic.Path1D{Targets: []float64{0.02}, MaxIncrement: 1e-3}, nil, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d increments, status %v\n", res.Increments, res.Status)
	fmt.Printf("sigma = %.4g Pa, eps_p = %.4g, alpha = %.4g Pa\n", s.Sigma, s.EpsP, s.BackStress(m.N))
	fmt.Printf("saturation stress %.4g Pa\n", m.SaturationStress())
	// Output:
	// 20 increments, status success
	// sigma = 3.877e+08 Pa, eps_p = 0.01806, alpha = 1.327e+08 Pa
	// saturation stress 4.133e+08 Pa
}

// Uniaxial stress in 3D under mixed control: the axial strain is
// prescribed, the other stresses are held at zero by Newton iterations.
func ExampleMaterial_Run3D() {
	m, _ := plastic.NewMaterial(200e9, 0.3, 250e6, []plastic.Term{{C: 40e9, Gamma: 300}}, plastic.Isotropic{})
	var s plastic.State3D
	path := plastic.UniaxialStressPath([]float64{0.01, -0.01}, 1e-4)
	res, err := m.Run3D(context.Background(), &s, &path, nil, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("%d increments, %d Newton iterations, %d cutbacks\n", res.Increments, res.NewtonIterations, res.Cutbacks)
	lateral := 0.0
	for k := 1; k < 6; k++ {
		lateral = max(lateral, abs(s.Sigma[k]))
	}
	fmt.Printf("sigma_11 = %.4g Pa, von Mises %.4g Pa, other stresses below 1 Pa: %v\n",
		s.Sigma[plastic.V11], plastic.VonMises(s.Sigma), lateral < 1)
	// Output:
	// 300 increments, 266 Newton iterations, 0 cutbacks
	// sigma_11 = -3.814e+08 Pa, von Mises 3.814e+08 Pa, other stresses below 1 Pa: true
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
