" Vim syntax for rill case files (*.rill). Our own groups, linked to the
" standard highlight groups at the end.
if exists('b:current_syntax')
  finish
endif

syntax case match

" Identifiers first; the more specific groups below win where they match.
syntax match rillIdentifier /\<\h\w*\>/
" Enum values are matches, not keywords: keywords would beat `top =` keys.
syntax match rillEnum /\<\%(producer\|injector\|west\|east\|south\|north\|top\|bottom\|transient\|steady\|field\|metric\|si\|rate\|bhp\|oil_rate\|liquid_rate\|water_rate\|corey\|table\|layers\|cells\|columns\)\>\%(\s*=\)\@!/
syntax match rillFile /\<file\>\%(\s*=\)\@!/ nextgroup=rillFileString skipwhite
syntax match rillDatum /\<at\>/
syntax match rillBlock /\%(^\|[{;]\)\s*\zs\<\%(case\|grid\|rock\|fluid\|oil\|water\|relperm\|initial\|well\|boundary\|fault\|aquifer\|timeline\|report\|patch\|at\|include\)\>\ze\%(\s*=\)\@!/
syntax match rillKey /\<\h\w*\ze\s*=\(=\)\@!/

syntax match rillOperator /[=*/+-]/
syntax match rillDelimiter /[;,]/
syntax match rillBrace /[{}()[\]]/

" Numbers, and the unit expression that follows a number, a ] or a file "...".
syntax match rillNumber /\%(\w\|\.\)\@<!-\=\%(\d\+\%(\.\.\@!\d*\)\=\|\.\d\+\)\%([eE][+-]\=\d\+\)\=\%(\w\|\.\)\@!/ nextgroup=rillUnit skipwhite
syntax match rillRange /\<\d\+\.\.\d\+\>/ contains=rillRangeOp
syntax match rillRangeOp /\.\./ contained
syntax match rillSize /\<\d\+\s*x\s*\d\+\%(\s*x\s*\d\+\)\=\>/ contains=rillSizeOp
syntax match rillSizeOp /x/ contained
syntax match rillUnit /\%(at\>\|x\>\)\@!\%(\a\w*\%(\^-\=\d\+\)\=\|%\|1\%([*/]\)\@=\)\%([*/]\%(\a\w*\%(\^-\=\d\+\)\=\|1\|([^()]*)\)\)*\%(\s*=\)\@!/ contained
syntax match rillListEnd /\]/ nextgroup=rillUnit skipwhite

syntax match rillEscape /\\["\\]/ contained
syntax match rillBadEscape /\\[^"\\]/ contained
syntax region rillString start=/"/ skip=/\\\\\|\\"/ end=/"/ end=/$/ contains=rillEscape,rillBadEscape
syntax region rillFileString start=/"/ skip=/\\\\\|\\"/ end=/"/ end=/$/ contained contains=rillEscape,rillBadEscape nextgroup=rillUnit skipwhite

syntax match rillComment /#.*$/ contains=@Spell

highlight default link rillComment Comment
highlight default link rillString String
highlight default link rillFileString String
highlight default link rillFile rillEnum
highlight default link rillEscape SpecialChar
highlight default link rillBadEscape Error
highlight default link rillNumber Number
highlight default link rillRange Number
highlight default link rillRangeOp Operator
highlight default link rillSize Number
highlight default link rillSizeOp Operator
highlight default link rillUnit Type
highlight default link rillBlock Structure
highlight default link rillKey Identifier
highlight default link rillEnum Constant
highlight default link rillDatum Keyword
highlight default link rillOperator Operator
highlight default link rillDelimiter Delimiter
highlight default link rillBrace Delimiter
highlight default link rillListEnd Delimiter

let b:current_syntax = 'rill'
