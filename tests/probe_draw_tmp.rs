use cagerank::draw::schlegel;
use cagerank::spiral::Spiral;
fn cross(o: [f64; 2], a: [f64; 2], b: [f64; 2]) -> f64 { (a[0]-o[0])*(b[1]-o[1]) - (a[1]-o[1])*(b[0]-o[0]) }
#[test]
fn probe() {
    let c = Spiral::from_pentagon_indices(60, &[1, 7, 9, 11, 13, 15, 18, 20, 22, 24, 26, 32]).unwrap().to_cage();
    for rounds in 0..8 {
        let p = schlegel::embed_with(&c, 0, rounds);
        let e = c.edges();
        let len: Vec<f64> = e.iter().map(|&[a,b]| { let (x,y)=(p[a as usize],p[b as usize]); ((x[0]-y[0]).powi(2)+(x[1]-y[1]).powi(2)).sqrt()}).collect();
        let lo = len.iter().copied().fold(9.0,f64::min); let hi = len.iter().copied().fold(0.0,f64::max);
        let mut crosses = 0;
        for i in 0..e.len() { for j in i+1..e.len() {
            let (s,t)=(e[i],e[j]); if s.iter().any(|v| t.contains(v)) {continue;}
            let (p1,p2,q1,q2)=(p[s[0] as usize],p[s[1] as usize],p[t[0] as usize],p[t[1] as usize]);
            if cross(q1,q2,p1)*cross(q1,q2,p2) < 0.0 && cross(p1,p2,q1)*cross(p1,p2,q2) < 0.0 { crosses += 1; }
        }}
        println!("rounds {rounds}: edge len {lo:.4}..{hi:.4} px {:.2}..{:.2} crossings {crosses}", lo*280.0, hi*280.0);
    }
}
