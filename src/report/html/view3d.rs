//! A case's 3D view on the page: a `<canvas>` drawn by the page's one inline script with
//! Canvas 2D (no GPU, no library: triangles sorted far to near and filled), its data
//! embedded beside it, and a legend of the pressure scale as inline SVG.
//!
//! The data come from the case's view file (`crate::report::view` says its format); the
//! pipeline reads it and hands it over as JSON. Wetted triangles take the colour of their
//! mean pressure on the scale [`STOPS`] (flat, unshaded, so a colour reads against the
//! legend); triangles no liquid touches are shaded grey; each free surface is a pale plane
//! drawn behind the mesh with its outline on top; the resultant is an arrow along the
//! force ending at a point of its line of action. Drag turns the view, the wheel zooms,
//! a double click returns to the default three-quarter view. On paper the canvas prints
//! as last drawn; without scripts a note says what is missing.
//!
//! After drawing, the script writes `data-drawn` (triangles drawn), `data-ms` (decoding
//! and first drawing, ms) and `data-rect` (the canvas's place on the page, CSS pixels) on
//! the canvas, for tests and measurements.

use std::fmt::Write;

use serde_json::Value;

use super::format::esc;
use crate::report::units::Units;

/// The pressure scale, 0 to the case's largest pressure: 17 stops, interpolated linearly.
/// Made in the OKLab colour space with lightness rising evenly from 0.32 to 0.94 (so the
/// scale reads in order even in grey), hue turning from 300° to 95° (violet, blue, teal,
/// green, yellow) and chroma from 0.10 to 0.16, clipped to sRGB. The test below makes
/// them again from that rule.
pub(super) const STOPS: [[u8; 3]; 17] = [
    [0x3b, 0x23, 0x5d],
    [0x3b, 0x31, 0x6f],
    [0x37, 0x40, 0x80],
    [0x2d, 0x4f, 0x8e],
    [0x1a, 0x5f, 0x99],
    [0x00, 0x70, 0xa1],
    [0x00, 0x80, 0xa6],
    [0x00, 0x90, 0xa7],
    [0x00, 0xa0, 0xa5],
    [0x00, 0xae, 0x9f],
    [0x00, 0xbc, 0x97],
    [0x4b, 0xc7, 0x8c],
    [0x76, 0xd2, 0x7f],
    [0x9e, 0xda, 0x72],
    [0xc4, 0xe1, 0x66],
    [0xe9, 0xe6, 0x5d],
    [0xff, 0xe9, 0x5c],
];

fn hex(c: [u8; 3]) -> String {
    format!("#{:02x}{:02x}{:02x}", c[0], c[1], c[2])
}

/// The colour of `t` ∈ [0, 1] on the scale (as the script computes it).
#[cfg(test)]
pub(super) fn colour(t: f64) -> [u8; 3] {
    let t = if t.is_finite() {
        t.clamp(0.0, 1.0)
    } else {
        0.0
    };
    let x = t * 16.0;
    let i = (x.floor() as usize).min(15);
    let u = x - i as f64;
    let (a, b) = (STOPS[i], STOPS[i + 1]);
    [0, 1, 2].map(|k| (f64::from(a[k]) + (f64::from(b[k]) - f64::from(a[k])) * u).round() as u8)
}

/// A step of 1, 2 or 5 × 10ⁿ giving about `n` ticks up to `max`.
fn nice_step(max: f64, n: f64) -> f64 {
    let raw = max / n;
    let e = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * e)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * e)
}

/// The legend: a vertical bar from 0 (bottom) to `pmax` (top), ticks in the page's unit.
fn legend(s: &mut String, id: &str, pmax_pa: f64, units: &Units) {
    let u = units.pressure;
    let top = pmax_pa * u.factor;
    let (h, y0, bar) = (330.0, 20.0, 280.0);
    let _ = write!(
        s,
        "<svg class=\"v3d-legend\" xmlns=\"http://www.w3.org/2000/svg\" width=\"120\" height=\"{h}\" viewBox=\"0 0 120 {h}\" role=\"img\" aria-label=\"pressure scale, {}\"><defs><linearGradient id=\"{id}\" x1=\"0\" y1=\"1\" x2=\"0\" y2=\"0\">",
        esc(u.name)
    );
    for (i, c) in STOPS.iter().enumerate() {
        let _ = write!(
            s,
            "<stop offset=\"{}\" stop-color=\"{}\"/>",
            i as f64 / 16.0,
            hex(*c)
        );
    }
    let _ = write!(
        s,
        "</linearGradient></defs><text x=\"0\" y=\"12\" class=\"lg-title\">pressure, {} (gauge)</text><rect x=\"4\" y=\"{y0}\" width=\"18\" height=\"{bar}\" fill=\"url(#{id})\" stroke=\"#4a4f57\" stroke-width=\"0.5\"/>",
        esc(u.name)
    );
    if top > 0.0 && top.is_finite() {
        let step = nice_step(top, 5.0);
        let mut k = 0.0;
        while k * step <= top * (1.0 + 1e-9) && k < 50.0 {
            let v = k * step;
            // Ticks too close to the top label are left to it.
            if top - v > 0.06 * top || v == 0.0 {
                let y = y0 + bar * (1.0 - v / top);
                let _ = write!(
                    s,
                    "<line x1=\"22\" x2=\"28\" y1=\"{y:.1}\" y2=\"{y:.1}\" stroke=\"#4a4f57\"/><text x=\"31\" y=\"{:.1}\">{}</text>",
                    y + 4.0,
                    crate::report::units::num(v, u.decimals.min(2))
                );
            }
            k += 1.0;
        }
    }
    let _ = write!(
        s,
        "<line x1=\"22\" x2=\"28\" y1=\"{y0}\" y2=\"{y0}\" stroke=\"#4a4f57\"/><text x=\"31\" y=\"{}\" class=\"lg-max\" data-pmax=\"{}\">{} max</text><rect x=\"4\" y=\"312\" width=\"18\" height=\"12\" fill=\"#bdc0c5\" stroke=\"#4a4f57\" stroke-width=\"0.5\"/><text x=\"31\" y=\"322\">no liquid</text></svg>",
        y0 + 4.0,
        u.fmt(pmax_pa),
        u.fmt(pmax_pa),
    );
}

fn finite_list(v: &Value) -> Option<Vec<f64>> {
    v.as_array()?.iter().map(Value::as_f64).collect()
}

/// The view of one case, or a note when its view file is missing or unreadable. `id`
/// is unique on the page.
pub(super) fn view_block(s: &mut String, id: &str, view: Option<&Value>, units: &Units) {
    let Some(v) = view else {
        s.push_str("<p class=\"muted\">3D view: no view file for this case (it is written with the results; compute the mesh again).</p>\n");
        return;
    };
    let data = v["data"].as_str().unwrap_or("");
    let b = v["box"].as_array().and_then(|b| {
        let lo = finite_list(b.first()?)?;
        let hi = finite_list(b.get(1)?)?;
        (lo.len() == 3 && hi.len() == 3).then(|| [lo, hi].concat())
    });
    let n = v["triangles"].as_u64().unwrap_or(0);
    let pmax = v["pressure_max"]
        .as_f64()
        .filter(|p| p.is_finite() && *p >= 0.0);
    let base64_only = data
        .bytes()
        .all(|c| c.is_ascii_alphanumeric() || c == b'+' || c == b'/' || c == b'=');
    let (Some(b), Some(pmax)) = (b.filter(|b| b.iter().all(|x| x.is_finite())), pmax) else {
        s.push_str("<p class=\"muted\">3D view: the view file cannot be read; compute the mesh again.</p>\n");
        return;
    };
    if !base64_only || b.iter().any(|x| !x.is_finite()) {
        s.push_str("<p class=\"muted\">3D view: the view file cannot be read; compute the mesh again.</p>\n");
        return;
    }
    let nums = |xs: &[f64]| {
        xs.iter()
            .map(|x| format!("{x}"))
            .collect::<Vec<_>>()
            .join(",")
    };
    let levels = finite_list(&v["levels"]).unwrap_or_default();
    let arrow = (|| {
        let p = finite_list(&v["arrow"]["point"])?;
        let d = finite_list(&v["arrow"]["direction"])?;
        (p.len() == 3 && d.len() == 3).then(|| [p, d].concat())
    })()
    .unwrap_or_default();
    let source = v["triangles_source"].as_u64().unwrap_or(n);
    let _ = write!(
        s,
        "<figure class=\"v3d-fig\"><div class=\"v3d-wrap\"><canvas class=\"v3d\" id=\"{id}\" width=\"720\" height=\"460\" data-box=\"{}\" data-levels=\"{}\" data-arrow=\"{}\" data-triangles=\"{n}\"></canvas><script type=\"application/octet-stream\" class=\"v3d-data\">{data}</script>",
        nums(&b),
        nums(&levels),
        nums(&arrow),
    );
    legend(s, &format!("{id}-scale"), pmax, units);
    s.push_str("</div><noscript><p class=\"muted\">The 3D view needs scripts; the tables and the pressure diagram hold every figure.</p></noscript><figcaption>");
    s.push_str("Wetted surface coloured by gauge pressure (scale at the right, 0 to the largest pressure); grey: no liquid in contact; pale plane: the free surface; arrow: the resultant along its line of action. Drag to turn, wheel to zoom, double-click for the default view. ");
    if source > n {
        let _ = write!(
            s,
            "The view is decimated from {source} to {n} triangles for display (pressures are area-weighted means there); every figure on the page is from the full mesh."
        );
    } else {
        let _ = write!(s, "{n} triangles, the whole field.");
    }
    s.push_str("</figcaption></figure>\n");
}

/// The page's one script: draws every `.v3d` canvas and lets the mouse turn it.
pub(super) fn script() -> String {
    let stops: Vec<String> = STOPS
        .iter()
        .map(|c| format!("[{},{},{}]", c[0], c[1], c[2]))
        .collect();
    format!(
        "<script>\n\"use strict\";\n(function(){{\nvar S=[{}];\n{}}})();\n</script>\n",
        stops.join(","),
        SCRIPT
    )
}

const SCRIPT: &str = r#"function col(t){t=Math.max(0,Math.min(1,t));var x=t*16,i=Math.min(15,Math.floor(x)),u=x-i,a=S[i],b=S[i+1];
return 'rgb('+Math.round(a[0]+(b[0]-a[0])*u)+','+Math.round(a[1]+(b[1]-a[1])*u)+','+Math.round(a[2]+(b[2]-a[2])*u)+')';}
function nums(s){return s?s.split(',').map(Number):[];}
function setup(cv){
var t0=performance.now(),raw=atob(cv.nextElementSibling.textContent.trim()),nb=raw.length,n=Math.floor(nb/20);
var bytes=new Uint8Array(nb);for(var i=0;i<nb;i++)bytes[i]=raw.charCodeAt(i);
var dv=new DataView(bytes.buffer),bx=nums(cv.dataset.box),P=new Float64Array(n*9),C=new Uint16Array(n);
for(var t=0;t<n;t++){for(var k=0;k<9;k++){var a=k%3;P[t*9+k]=bx[a]+(bx[a+3]-bx[a])*dv.getUint16(t*20+k*2,true)/65535;}C[t]=dv.getUint16(t*20+18,true);}
var c=[(bx[0]+bx[3])/2,(bx[1]+bx[4])/2,(bx[2]+bx[5])/2],R=Math.max(1e-9,Math.hypot(bx[3]-bx[0],bx[4]-bx[1],bx[5]-bx[2])/2);
var lv=nums(cv.dataset.levels),ar=nums(cv.dataset.arrow),st={yaw:-0.6,pitch:0.45,zoom:1},ctx=cv.getContext('2d'),busy=false;
function draw(coarse){var W=cv.width,H=cv.height,cy=Math.cos(st.yaw),sy=Math.sin(st.yaw),cp=Math.cos(st.pitch),sp=Math.sin(st.pitch),s=st.zoom*Math.min(W,H)/(2.2*R);
function pr(x,y,z){x-=c[0];y-=c[1];z-=c[2];var x1=x*cy-y*sy,y1=x*sy+y*cy;return[W/2+s*x1,H/2-s*(y1*sp+z*cp),y1*cp-z*sp];}
ctx.fillStyle='#fbfbf8';ctx.fillRect(0,0,W,H);
lv.forEach(function(z){var e=0.15*R,q=[[bx[0]-e,bx[1]-e],[bx[3]+e,bx[1]-e],[bx[3]+e,bx[4]+e],[bx[0]-e,bx[4]+e]].map(function(p){return pr(p[0],p[1],z);});
ctx.beginPath();q.forEach(function(p,i){i?ctx.lineTo(p[0],p[1]):ctx.moveTo(p[0],p[1]);});ctx.closePath();ctx.fillStyle='rgba(120,170,215,0.22)';ctx.fill();});
var step=coarse&&n>30000?Math.ceil(n/30000):1,m=Math.ceil(n/step),S2=new Float32Array(m*7),D=new Float64Array(m),I=new Uint32Array(m);
for(var j=0,t=0;t<n;t+=step,j++){var o=t*9,a=pr(P[o],P[o+1],P[o+2]),b=pr(P[o+3],P[o+4],P[o+5]),d=pr(P[o+6],P[o+7],P[o+8]);
S2.set([a[0],a[1],b[0],b[1],d[0],d[1],t],j*7);D[j]=a[2]+b[2]+d[2];I[j]=j;}
I.sort(function(p,q){return D[q]-D[p];});
for(var r=0;r<m;r++){var j=I[r],q=j*7,t=S2[q+6],f;if(C[t]){f=col((C[t]-1)/65534);}else{var o=t*9,ux=P[o+3]-P[o],uy=P[o+4]-P[o+1],uz=P[o+5]-P[o+2],vx=P[o+6]-P[o],vy=P[o+7]-P[o+1],vz=P[o+8]-P[o+2];
var nx=uy*vz-uz*vy,ny=uz*vx-ux*vz,nz=ux*vy-uy*vx,nl=Math.hypot(nx,ny,nz)||1,ndy=(nx*sy+ny*cy)*cp-nz*sp,g=Math.round(150+70*Math.abs(ndy)/nl);f='rgb('+g+','+(g+2)+','+(g+5)+')';}
ctx.beginPath();ctx.moveTo(S2[q],S2[q+1]);ctx.lineTo(S2[q+2],S2[q+3]);ctx.lineTo(S2[q+4],S2[q+5]);ctx.closePath();ctx.fillStyle=f;ctx.strokeStyle=f;ctx.lineWidth=0.6;ctx.fill();ctx.stroke();}
lv.forEach(function(z){var e=0.15*R,q=[[bx[0]-e,bx[1]-e],[bx[3]+e,bx[1]-e],[bx[3]+e,bx[4]+e],[bx[0]-e,bx[4]+e]].map(function(p){return pr(p[0],p[1],z);});
ctx.beginPath();q.forEach(function(p,i){i?ctx.lineTo(p[0],p[1]):ctx.moveTo(p[0],p[1]);});ctx.closePath();ctx.strokeStyle='#3d7fb8';ctx.lineWidth=1.2;ctx.setLineDash([6,4]);ctx.stroke();ctx.setLineDash([]);});
if(ar.length==6){var L=0.8*R,tip=pr(ar[0],ar[1],ar[2]),tail=pr(ar[0]-L*ar[3],ar[1]-L*ar[4],ar[2]-L*ar[5]),dx=tip[0]-tail[0],dy=tip[1]-tail[1],dl=Math.hypot(dx,dy)||1,ux=dx/dl,uy=dy/dl,hl=Math.min(16,dl*0.4);
[['#ffffff',5],['#b3261e',2.5]].forEach(function(sty){ctx.strokeStyle=sty[0];ctx.lineWidth=sty[1];ctx.beginPath();ctx.moveTo(tail[0],tail[1]);ctx.lineTo(tip[0]-ux*hl*0.6,tip[1]-uy*hl*0.6);ctx.stroke();});
ctx.fillStyle='#b3261e';ctx.beginPath();ctx.moveTo(tip[0],tip[1]);ctx.lineTo(tip[0]-ux*hl-uy*hl*0.45,tip[1]-uy*hl+ux*hl*0.45);ctx.lineTo(tip[0]-ux*hl+uy*hl*0.45,tip[1]-uy*hl-ux*hl*0.45);ctx.closePath();ctx.fill();}
cv.setAttribute('data-drawn',String(m));}
function later(coarse){if(busy)return;busy=true;requestAnimationFrame(function(){busy=false;draw(coarse);});}
var drag=null;cv.addEventListener('mousedown',function(e){drag=[e.clientX,e.clientY];e.preventDefault();});
window.addEventListener('mouseup',function(){if(drag){drag=null;later(false);}});
window.addEventListener('mousemove',function(e){if(!drag)return;st.yaw+=(e.clientX-drag[0])*0.01;st.pitch=Math.max(-1.5,Math.min(1.5,st.pitch+(e.clientY-drag[1])*0.01));drag=[e.clientX,e.clientY];later(true);});
cv.addEventListener('wheel',function(e){e.preventDefault();st.zoom=Math.max(0.2,Math.min(20,st.zoom*Math.exp(-e.deltaY*0.0015)));later(false);},{passive:false});
cv.addEventListener('dblclick',function(){st={yaw:-0.6,pitch:0.45,zoom:1};later(false);});
draw(false);cv.setAttribute('data-ms',String(Math.round(performance.now()-t0)));var rc=cv.getBoundingClientRect();cv.setAttribute('data-rect',[rc.left+window.scrollX,rc.top+window.scrollY,rc.width,rc.height].map(Math.round).join(','));}
var all=document.querySelectorAll('canvas.v3d');for(var i=0;i<all.length;i++){try{setup(all[i]);}catch(e){all[i].setAttribute('data-error',String(e));}}
"#;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::units::UnitSystem;

    /// OKLab to sRGB bytes (clipped).
    fn oklab(l: f64, c: f64, h_deg: f64) -> [u8; 3] {
        let (a, b) = (c * h_deg.to_radians().cos(), c * h_deg.to_radians().sin());
        let l_ = (l + 0.396_337_777_4 * a + 0.215_803_757_3 * b).powi(3);
        let m_ = (l - 0.105_561_345_8 * a - 0.063_854_172_8 * b).powi(3);
        let s_ = (l - 0.089_484_177_5 * a - 1.291_485_548 * b).powi(3);
        let lin = [
            4.076_741_662_1 * l_ - 3.307_711_591_3 * m_ + 0.230_969_929_2 * s_,
            -1.268_438_004_6 * l_ + 2.609_757_401_1 * m_ - 0.341_319_396_5 * s_,
            -0.004_196_086_3 * l_ - 0.703_418_614_7 * m_ + 1.707_614_701 * s_,
        ];
        lin.map(|x| {
            let x = x.clamp(0.0, 1.0);
            let e = if x <= 0.003_130_8 {
                12.92 * x
            } else {
                1.055 * x.powf(1.0 / 2.4) - 0.055
            };
            (255.0 * e).round() as u8
        })
    }

    fn luminance(c: [u8; 3]) -> f64 {
        let lin = c.map(|v| {
            let v = f64::from(v) / 255.0;
            if v <= 0.040_45 {
                v / 12.92
            } else {
                ((v + 0.055) / 1.055).powf(2.4)
            }
        });
        0.2126 * lin[0] + 0.7152 * lin[1] + 0.0722 * lin[2]
    }

    #[test]
    fn the_stops_follow_their_rule_and_brighten_with_pressure() {
        for (i, stop) in STOPS.iter().enumerate() {
            let t = i as f64 / 16.0;
            let made = oklab(0.32 + 0.62 * t, 0.10 + 0.06 * t, 300.0 - 205.0 * t);
            for k in 0..3 {
                assert!(
                    made[k].abs_diff(stop[k]) <= 1,
                    "stop {i}: {made:?} {stop:?}"
                );
            }
        }
        // Monotone in pressure: the luminance of the interpolated scale rises everywhere
        // (within the rounding of one byte of blue: 0.0722 · at most 0.013 ≈ 1e-3).
        let mut last = -1.0;
        for k in 0..=256 {
            let y = luminance(colour(k as f64 / 256.0));
            assert!(y >= last - 1e-3, "{k}");
            last = y;
        }
        assert!(luminance(colour(1.0)) > 5.0 * luminance(colour(0.0)));
        assert_eq!(colour(f64::NAN), STOPS[0]);
        assert_eq!(colour(2.0), STOPS[16]);
    }

    #[test]
    fn the_view_embeds_its_data_and_a_legend_in_the_page_unit() {
        let v = serde_json::json!({"view": 1, "case": "c", "triangles_source": 400, "triangles": 100,
            "box": [[0.0, 0.0, 0.0], [1.0, 2.0, 3.0]], "pressure_max": 29419.95,
            "levels": [3.0], "arrow": {"point": [0.5, 0.0, 1.0], "direction": [1.0, 0.0, 0.0]},
            "data": "AAAA"});
        let mut s = String::new();
        view_block(&mut s, "v-1", Some(&v), &Units::of(UnitSystem::Si));
        assert!(s.contains("data-box=\"0,0,0,1,2,3\""));
        assert!(s.contains("data-levels=\"3\""));
        assert!(s.contains(">AAAA</script>"));
        // 29 419.95 Pa = 29.42 kPa at the top of the bar.
        assert!(s.contains("29.42 max"), "{s}");
        assert!(s.contains("pressure, kPa (gauge)"));
        assert!(s.contains("decimated from 400 to 100 triangles"));
        let mut us = String::new();
        view_block(&mut us, "v-1", Some(&v), &Units::of(UnitSystem::Us));
        // 29 419.95 Pa / 6894.757 Pa/psi = 4.267 psi.
        assert!(
            us.contains("4.267 max") && us.contains("pressure, psi"),
            "{us}"
        );
        // Data that could close the script element is refused.
        let mut bad = v.clone();
        bad["data"] = "AA</script><b>".into();
        let mut s = String::new();
        view_block(&mut s, "v-1", Some(&bad), &Units::of(UnitSystem::Si));
        assert!(!s.contains("<b>") && s.contains("cannot be read"));
        let mut s = String::new();
        view_block(&mut s, "v-1", None, &Units::of(UnitSystem::Si));
        assert!(s.contains("no view file"));
    }

    #[test]
    fn legend_ticks_are_round_numbers() {
        assert_eq!(nice_step(29.42, 5.0), 10.0);
        assert_eq!(nice_step(4.2, 5.0), 1.0);
        assert_eq!(nice_step(0.07, 5.0), 0.02);
    }
}
