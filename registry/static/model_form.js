// The model form works without this script: a front-end element's "Show this type's fields"
// button re-renders the form with the fields of the type chosen. With it, choosing a type
// presses that button, so the fields follow the choice at once (nothing is saved by it).
document.querySelectorAll("form.model-form fieldset.element").forEach(function (row) {
  var type = row.querySelector('select[name$="-type"]');
  var refresh = row.querySelector("button.type-refresh");
  if (type && refresh) {
    type.addEventListener("change", function () { refresh.click(); });
    refresh.hidden = true;
  }
});
